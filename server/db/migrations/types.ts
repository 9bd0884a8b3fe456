// The shape of one migration, in a module of its own so that migrations never import their runner.
import type { Sequelize } from 'sequelize';
import type { MigrationParams } from 'umzug';

export type Migration = (params: MigrationParams<Sequelize>) => Promise<unknown>;
