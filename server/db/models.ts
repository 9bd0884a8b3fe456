// Sequelize models over the tables of server/db/migrations. They describe the schema for
// queries; the migrations own it (no sync()).
import {
  DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes,
  type InferCreationAttributes, type NonAttribute, type Sequelize,
} from 'sequelize';
import type { Report, Rules, Status } from '../../shared/types';

export type Role = 'lead' | 'engineer' | 'viewer';
export const ROLES: Role[] = ['lead', 'engineer', 'viewer'];

class UserModel extends Model<InferAttributes<UserModel>, InferCreationAttributes<UserModel>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare name: string;
  declare passwordHash: string | null;
  declare isAdmin: CreationOptional<boolean>;
  declare deactivatedAt: CreationOptional<Date | null>;
  declare sessionEpoch: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

class ProjectModel extends Model<InferAttributes<ProjectModel>, InferCreationAttributes<ProjectModel>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare baseBranch: CreationOptional<string>;
  declare regressionTolerance: CreationOptional<number>;
  declare branchRunDays: CreationOptional<number | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

class MembershipModel extends Model<InferAttributes<MembershipModel>, InferCreationAttributes<MembershipModel>> {
  declare id: CreationOptional<number>;
  declare projectId: ForeignKey<ProjectModel['id']>;
  declare userId: ForeignKey<UserModel['id']>;
  declare role: Role;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare user?: NonAttribute<UserModel>;
  declare project?: NonAttribute<ProjectModel>;
}

class CiTokenModel extends Model<InferAttributes<CiTokenModel>, InferCreationAttributes<CiTokenModel>> {
  declare id: CreationOptional<number>;
  declare projectId: ForeignKey<ProjectModel['id']>;
  declare name: string;
  declare tokenHash: string;
  declare prefix: string;
  declare createdBy: number | null;
  declare lastUsedAt: CreationOptional<Date | null>;
  declare revokedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare creator?: NonAttribute<UserModel | null>;
}

class RunModel extends Model<InferAttributes<RunModel>, InferCreationAttributes<RunModel>> {
  declare id: CreationOptional<number>;
  declare projectId: ForeignKey<ProjectModel['id']>;
  declare branch: string;
  declare commit: string;
  declare baseBranch: string | null;
  declare baseCommit: string | null;
  declare verdict: Status;
  declare toolVersion: string;
  declare designCount: number;
  declare failedCount: number;
  declare errorCount: number;
  declare utilization: number | null;
  declare registerMinimum: number | null;
  declare violationCount: number;
  declare commitMessage: string | null;
  declare commitAuthor: string | null;
  declare utilizationFloor: number | null;
  declare report: Report;
  declare createdAt: CreationOptional<Date>;
}

class RunDesignModel extends Model<InferAttributes<RunDesignModel>, InferCreationAttributes<RunDesignModel>> {
  declare id: CreationOptional<number>;
  declare runId: ForeignKey<RunModel['id']>;
  declare designName: string;
  declare file: string;
  declare status: Status;
  declare utilization: number | null;
  declare registerMinimum: number | null;
  declare negativeEdgeCount: number | null;
  declare retimingFeasible: boolean | null;
  declare violationCount: number;
  declare factor: number | null;
  declare unitCount: number | null;
  declare latencyAdded: number | null;
}

class TeamRulesModel extends Model<InferAttributes<TeamRulesModel>, InferCreationAttributes<TeamRulesModel>> {
  declare projectId: number;
  declare rules: Rules;
  declare updatedBy: number | null;
  declare updatedAt: CreationOptional<Date>;
  declare editor?: NonAttribute<UserModel | null>;
}

class RuleChangeModel extends Model<InferAttributes<RuleChangeModel>, InferCreationAttributes<RuleChangeModel>> {
  declare id: CreationOptional<number>;
  declare projectId: number;
  declare userId: number | null;
  declare rule: string;
  declare oldValue: unknown;
  declare newValue: unknown;
  declare reason: CreationOptional<string | null>;
  declare revertOf: CreationOptional<number | null>;
  declare createdAt: CreationOptional<Date>;
  declare user?: NonAttribute<UserModel | null>;
}

class WatchModel extends Model<InferAttributes<WatchModel>, InferCreationAttributes<WatchModel>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare projectId: number;
  declare branch: string;
  declare createdAt: CreationOptional<Date>;
  declare user?: NonAttribute<UserModel>;
}

class InvitationModel extends Model<InferAttributes<InvitationModel>, InferCreationAttributes<InvitationModel>> {
  declare id: CreationOptional<number>;
  declare email: string;
  declare projectId: number | null;
  declare role: Role | null;
  declare isAdmin: CreationOptional<boolean>;
  declare tokenHash: string;
  declare invitedBy: number | null;
  declare expiresAt: Date;
  declare acceptedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare project?: NonAttribute<ProjectModel | null>;
}

// Functions, not shared objects: Sequelize writes into attribute definitions (field names).
const id = () => ({ type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true });
const stamp = () => ({ type: DataTypes.DATE, allowNull: false });

/**
 * Binds fresh subclasses of the model classes to one connection, so that two connections in one
 * process (tests, a benchmark next to a seed) never share or steal each other's models.
 */
export function defineModels(sequelize: Sequelize) {
  const common = { sequelize, underscored: true };
  const User = class extends UserModel {};
  const Project = class extends ProjectModel {};
  const Membership = class extends MembershipModel {};
  const CiToken = class extends CiTokenModel {};
  const Run = class extends RunModel {};
  const RunDesign = class extends RunDesignModel {};
  const TeamRules = class extends TeamRulesModel {};
  const RuleChange = class extends RuleChangeModel {};
  const Watch = class extends WatchModel {};
  const Invitation = class extends InvitationModel {};
  User.init({
    id: id(), createdAt: stamp(), updatedAt: stamp(),
    email: { type: DataTypes.TEXT, allowNull: false, unique: true },
    name: { type: DataTypes.TEXT, allowNull: false },
    passwordHash: { type: DataTypes.TEXT },
    isAdmin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    deactivatedAt: { type: DataTypes.DATE },
    sessionEpoch: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
  }, { ...common, tableName: 'users', modelName: 'User' });

  Project.init({
    id: id(), createdAt: stamp(), updatedAt: stamp(),
    slug: { type: DataTypes.TEXT, allowNull: false, unique: true },
    name: { type: DataTypes.TEXT, allowNull: false },
    baseBranch: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'main' },
    regressionTolerance: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0.05 },
    branchRunDays: { type: DataTypes.INTEGER },
  }, { ...common, tableName: 'projects', modelName: 'Project' });

  Membership.init({
    id: id(), createdAt: stamp(), updatedAt: stamp(),
    role: { type: DataTypes.TEXT, allowNull: false },
  }, { ...common, tableName: 'memberships', modelName: 'Membership' });

  CiToken.init({
    id: id(), createdAt: stamp(),
    name: { type: DataTypes.TEXT, allowNull: false },
    tokenHash: { type: DataTypes.TEXT, allowNull: false },
    prefix: { type: DataTypes.TEXT, allowNull: false },
    createdBy: { type: DataTypes.INTEGER },
    lastUsedAt: { type: DataTypes.DATE },
    revokedAt: { type: DataTypes.DATE },
  }, { ...common, tableName: 'ci_tokens', modelName: 'CiToken', updatedAt: false });

  Run.init({
    id: id(), createdAt: stamp(),
    branch: { type: DataTypes.TEXT, allowNull: false },
    commit: { type: DataTypes.TEXT, allowNull: false },
    baseBranch: { type: DataTypes.TEXT },
    baseCommit: { type: DataTypes.TEXT },
    verdict: { type: DataTypes.TEXT, allowNull: false },
    toolVersion: { type: DataTypes.TEXT, allowNull: false },
    designCount: { type: DataTypes.INTEGER, allowNull: false },
    failedCount: { type: DataTypes.INTEGER, allowNull: false },
    errorCount: { type: DataTypes.INTEGER, allowNull: false },
    utilization: { type: DataTypes.DOUBLE },
    registerMinimum: { type: DataTypes.INTEGER },
    violationCount: { type: DataTypes.INTEGER, allowNull: false },
    commitMessage: { type: DataTypes.TEXT },
    commitAuthor: { type: DataTypes.TEXT },
    utilizationFloor: { type: DataTypes.DOUBLE },
    report: { type: DataTypes.JSONB, allowNull: false },
  }, { ...common, tableName: 'runs', modelName: 'Run', updatedAt: false });

  RunDesign.init({
    id: id(),
    designName: { type: DataTypes.TEXT, allowNull: false },
    file: { type: DataTypes.TEXT, allowNull: false },
    status: { type: DataTypes.TEXT, allowNull: false },
    utilization: { type: DataTypes.DOUBLE },
    registerMinimum: { type: DataTypes.INTEGER },
    negativeEdgeCount: { type: DataTypes.INTEGER },
    retimingFeasible: { type: DataTypes.BOOLEAN },
    violationCount: { type: DataTypes.INTEGER, allowNull: false },
    factor: { type: DataTypes.INTEGER },
    unitCount: { type: DataTypes.INTEGER },
    latencyAdded: { type: DataTypes.INTEGER },
  }, { ...common, tableName: 'run_designs', modelName: 'RunDesign', timestamps: false });

  TeamRules.init({
    projectId: { type: DataTypes.INTEGER, primaryKey: true },
    rules: { type: DataTypes.JSONB, allowNull: false },
    updatedBy: { type: DataTypes.INTEGER },
    updatedAt: stamp(),
  }, { ...common, tableName: 'team_rules', modelName: 'TeamRules', createdAt: false });

  RuleChange.init({
    id: id(), createdAt: stamp(),
    projectId: { type: DataTypes.INTEGER, allowNull: false },
    userId: { type: DataTypes.INTEGER },
    rule: { type: DataTypes.TEXT, allowNull: false },
    oldValue: { type: DataTypes.JSONB },
    newValue: { type: DataTypes.JSONB },
    reason: { type: DataTypes.TEXT },
    revertOf: { type: DataTypes.INTEGER },
  }, { ...common, tableName: 'rule_changes', modelName: 'RuleChange', updatedAt: false });

  Watch.init({
    id: id(), createdAt: stamp(),
    userId: { type: DataTypes.INTEGER, allowNull: false },
    projectId: { type: DataTypes.INTEGER, allowNull: false },
    branch: { type: DataTypes.TEXT, allowNull: false },
  }, { ...common, tableName: 'watches', modelName: 'Watch', updatedAt: false });

  Invitation.init({
    id: id(), createdAt: stamp(),
    email: { type: DataTypes.TEXT, allowNull: false },
    projectId: { type: DataTypes.INTEGER },
    role: { type: DataTypes.TEXT },
    isAdmin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    tokenHash: { type: DataTypes.TEXT, allowNull: false },
    invitedBy: { type: DataTypes.INTEGER },
    expiresAt: { type: DataTypes.DATE, allowNull: false },
    acceptedAt: { type: DataTypes.DATE },
  }, { ...common, tableName: 'invitations', modelName: 'Invitation', updatedAt: false });

  Membership.belongsTo(User, { as: 'user', foreignKey: 'userId' });
  Membership.belongsTo(Project, { as: 'project', foreignKey: 'projectId' });
  CiToken.belongsTo(Project, { as: 'project', foreignKey: 'projectId' });
  CiToken.belongsTo(User, { as: 'creator', foreignKey: 'createdBy' });
  Run.belongsTo(Project, { as: 'project', foreignKey: 'projectId' });
  RunDesign.belongsTo(Run, { as: 'run', foreignKey: 'runId' });
  TeamRules.belongsTo(User, { as: 'editor', foreignKey: 'updatedBy' });
  RuleChange.belongsTo(User, { as: 'user', foreignKey: 'userId' });
  Watch.belongsTo(User, { as: 'user', foreignKey: 'userId' });
  Invitation.belongsTo(Project, { as: 'project', foreignKey: 'projectId' });

  return { User, Project, Membership, CiToken, Run, RunDesign, TeamRules, RuleChange, Watch, Invitation };
}

export type Models = ReturnType<typeof defineModels>;

// Instance types for the rest of the server.
export type User = UserModel;
export type Project = ProjectModel;
export type Membership = MembershipModel;
export type CiToken = CiTokenModel;
export type Run = RunModel;
export type RunDesign = RunDesignModel;
export type TeamRules = TeamRulesModel;
export type RuleChange = RuleChangeModel;
export type Watch = WatchModel;
export type Invitation = InvitationModel;
