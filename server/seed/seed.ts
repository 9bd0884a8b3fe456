// The local demo: four accounts (one per role), a project with team rules, and a history of runs
// on several branches, each run made by the real engine over variants of the designs in
// examples/ (the folding factor raised, a unit's folding set rotated). The commits are invented
// but stable, so seeding twice adds nothing the second time.
import { createHash } from 'node:crypto';
import { chmodSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import bcrypt from 'bcryptjs';
import { buildReport } from '../../shared/report/report';
import { mergeRules } from '../../shared/report/rules';
import type { DesignReport, Rules } from '../../shared/types';
import type { AppContext } from '../context';
import type { Project, Role, User } from '../db/models';
import { CI_TOKEN_PREFIX, hashSecret, newSecret } from '../http/auth';
import { checkDesignText } from '../engine';
import { storeHardware } from '../resources/runs/hardware';
import { ingestRun } from '../resources/runs/ingest';
import { demoHardware } from './hardware';

/** The demo password: it exists only in a locally seeded demo database. */
export const DEMO_PASSWORD = 'pleat-demo';
export const DEMO_ACCOUNTS: { email: string; name: string; role: Role | 'admin' }[] = [
  { email: 'admin@example.com', name: 'Ada Admin', role: 'admin' },
  { email: 'lead@example.com', name: 'Lena Lead', role: 'lead' },
  { email: 'engineer@example.com', name: 'Emil Engineer', role: 'engineer' },
  { email: 'viewer@example.com', name: 'Vera Viewer', role: 'viewer' },
];
export const DEMO_PROJECT = { slug: 'demo', name: 'DSP datapaths (demo)', baseBranch: 'main', regressionTolerance: 0.05 };
const TEAM_RULES: Rules = { negative_delays: 'retime', min_utilization: 0.6 };
const REPO_RULES: Rules = { min_utilization: 0.7, min_unit_utilization: 0.5, max_registers: 4096 };

type Variant = (text: string) => string;
const same: Variant = (t) => t;

/** Raises (or sets) the folding factor N: the sets stay valid, the extra partitions idle. */
const factor = (n: number): Variant => (t) => t.replace(/^(\s+factor:\s*)\d+/m, `$1${n}`);

/** Rotates one unit's folding set by k partitions: every node on it moves to a later partition. */
const rotate = (unit: string, k: number): Variant => (t) =>
  t.replace(new RegExp(`^(\\s+${unit}:\\s*\\[)([^\\]]*)(\\])`, 'm'), (_m, open: string, list: string, close: string) => {
    const items = list.split(',').map((s) => s.trim());
    const n = items.length;
    const r = ((k % n) + n) % n;
    return `${open}${[...items.slice(n - r), ...items.slice(0, n - r)].join(', ')}${close}`;
  });

const both = (a: Variant, b: Variant): Variant => (t) => b(a(t));

const FILES = {
  sensor: 'sensor-frontend.fold.yaml',
  butterfly: 'butterfly-stage.fold.yaml',
  channelizer: 'channelizer-taps.fold.yaml',
  equaliser: 'equaliser-retimed.fold.yaml',
  envelope: 'envelope-unretimable.fold.yaml',
} as const;
type Key = keyof typeof FILES;
const MAIN_SET: Key[] = ['sensor', 'butterfly', 'channelizer', 'equaliser'];

interface Step { variants?: Partial<Record<Key, Variant>>; designs?: Key[] }
interface BranchPlan { name: string; from: { branch: string; index: number } | null; startDay: number; steps: Step[] }

const PLAN: BranchPlan[] = [
  {
    // The trunk: the channelizer starts loosely folded (N = 6), is tightened to 5, then 4.
    name: 'main', from: null, startDay: 48,
    steps: [
      { variants: { channelizer: factor(6) } },
      { variants: { channelizer: factor(6) } },
      { variants: { channelizer: factor(5) } },
      { variants: { channelizer: factor(5), butterfly: rotate('ADD2', 1) } },
      { variants: { channelizer: factor(5) } },
      {},
      {},
      { variants: { sensor: rotate('MUL1', 1) } }, // breaks main for one commit
      {},
      {},
      { variants: { butterfly: rotate('ADD1', 1) } },
      {},
      { variants: { equaliser: rotate('MUL1', 1) } },
      {},
      {},
      {},
    ],
  },
  {
    // Regresses against main: the equaliser is folded looser and looser (utilization falls).
    name: 'feature/equaliser-n6', from: { branch: 'main', index: 6 }, startDay: 14,
    steps: [
      { variants: { equaliser: factor(6) } },
      { variants: { equaliser: factor(6) } },
      { variants: { equaliser: factor(7) } },
      { variants: { equaliser: factor(7), sensor: rotate('ADD1', 1) } },
    ],
  },
  {
    // Fails: adds the flowmeter envelope, whose loops hold more pipeline stages than N = 2 allows.
    name: 'feature/flowmeter-envelope', from: { branch: 'main', index: 8 }, startDay: 7,
    steps: [
      { designs: [...MAIN_SET, 'envelope'] },
      { designs: [...MAIN_SET, 'envelope'], variants: { envelope: rotate('MUL1', 1) } },
      { designs: [...MAIN_SET, 'envelope'], variants: { envelope: factor(3) } },
    ],
  },
  {
    // Passes: reorders the channelizer's adders; the retiming absorbs it.
    name: 'feature/ddc-reorder', from: { branch: 'main', index: 9 }, startDay: 10,
    steps: [
      { variants: { channelizer: rotate('ADD_A', 1) } },
      { variants: { channelizer: both(rotate('ADD_A', 1), rotate('ADD_B', 1)) } },
    ],
  },
];

/** Invented commit authors of the demo history. */
const AUTHORS = ['Rhea Router', 'Tomas Tapwright', 'Ines Delaney'];

/** A commit message in words, from what the step changes. */
function messageOf(step: Step, i: number): string {
  const changed = Object.keys(step.variants ?? {});
  if (step.designs && !changed.length) return `Add the ${step.designs[step.designs.length - 1]} design`;
  if (changed.length) return `Refold the ${changed.join(' and ')} design${changed.length === 1 ? '' : 's'}`;
  return i === 0 ? 'Start the datapath designs' : 'Tidy comments in the design files';
}

function commitOf(branch: string, index: number): string {
  return createHash('sha1').update(`pleat-demo:${branch}:${index}`).digest('hex');
}

async function ensureAccount(ctx: AppContext, a: (typeof DEMO_ACCOUNTS)[number], hash: () => Promise<string>): Promise<User> {
  const { User } = ctx.db.models;
  const existing = await User.findOne({ where: { email: a.email } });
  if (existing) return existing;
  return User.create({ email: a.email, name: a.name, isAdmin: a.role === 'admin', passwordHash: await hash() });
}

async function ensureProject(ctx: AppContext, lead: User): Promise<{ project: Project; created: boolean }> {
  const { Project, TeamRules, RuleChange } = ctx.db.models;
  const existing = await Project.findOne({ where: { slug: DEMO_PROJECT.slug } });
  if (existing) return { project: existing, created: false };
  const project = await ctx.db.sequelize.transaction(async (transaction) => {
    const p = await Project.create(DEMO_PROJECT, { transaction });
    await TeamRules.create({ projectId: p.id, rules: TEAM_RULES, updatedBy: lead.id }, { transaction });
    for (const [rule, value] of Object.entries(TEAM_RULES)) {
      await RuleChange.create({ projectId: p.id, userId: lead.id, rule, oldValue: null, newValue: value }, { transaction });
    }
    return p;
  });
  return { project, created: true };
}

export async function seedDemo(ctx: AppContext, log: (msg: string) => void = () => {}): Promise<{ runsAdded: number; ciToken: string | null }> {
  if (ctx.config.env === 'production' && process.env.PLEAT_SEED_FORCE !== '1') {
    throw new Error('refusing to seed demo accounts into a production database (set PLEAT_SEED_FORCE=1 to insist)');
  }
  const { Membership, CiToken, Watch } = ctx.db.models;
  let hashed: Promise<string> | null = null;
  const hash = () => (hashed ??= bcrypt.hash(DEMO_PASSWORD, ctx.config.bcryptRounds));
  const users = new Map<string, User>();
  for (const a of DEMO_ACCOUNTS) users.set(a.role, await ensureAccount(ctx, a, hash));

  const { project, created } = await ensureProject(ctx, users.get('lead')!);
  for (const role of ['lead', 'engineer', 'viewer'] as const) {
    const user = users.get(role)!;
    await Membership.findOrCreate({ where: { projectId: project.id, userId: user.id }, defaults: { projectId: project.id, userId: user.id, role } });
  }
  const engineer = users.get('engineer')!;
  for (const branch of ['main', 'feature/equaliser-n6']) {
    await Watch.findOrCreate({ where: { projectId: project.id, userId: engineer.id, branch }, defaults: { projectId: project.id, userId: engineer.id, branch } });
  }
  let ciToken: string | null = null;
  if (created && (await CiToken.count({ where: { projectId: project.id } })) === 0) {
    ciToken = newSecret(CI_TOKEN_PREFIX);
    await CiToken.create({ projectId: project.id, name: 'demo CI', tokenHash: hashSecret(ciToken), prefix: ciToken.slice(0, 15), createdBy: users.get('lead')!.id });
  }

  // The history: every run is the real engine's report over the variant files of that commit.
  const texts = Object.fromEntries(Object.entries(FILES).map(([k, f]) => [k, readFileSync(join(ctx.config.root, 'examples', f), 'utf8')])) as Record<Key, string>;
  const { effective } = mergeRules(TEAM_RULES, REPO_RULES);
  const cache = new Map<string, DesignReport>();
  const check = (key: Key, variant: Variant): DesignReport => {
    const text = variant(texts[key]);
    const cacheKey = `${key}\u0000${text}`;
    let d = cache.get(cacheKey);
    if (!d) {
      // The design's text travels with the run (designs[].source), so the run page can plan it.
      d = { ...checkDesignText(text, `hw/${FILES[key]}`, TEAM_RULES, REPO_RULES).design, source: text } as DesignReport;
      // As if CI ran pleat rtl --area and uploaded with --hardware-summary (designs[].hardware).
      const hardware = demoHardware(d, d.file, (d.name ?? key).replace(/\W/g, '_'));
      if (hardware) d.hardware = hardware;
      cache.set(cacheKey, d);
    }
    return d;
  };
  const now = Date.now();
  const day = 24 * 3600 * 1000;
  let runsAdded = 0;
  for (const plan of PLAN) {
    for (const [i, step] of plan.steps.entries()) {
      const keys = step.designs ?? MAIN_SET;
      const designs = keys.map((k) => check(k, step.variants?.[k] ?? same));
      const report = buildReport({
        version: 'demo',
        git: {
          branch: plan.name,
          commit: commitOf(plan.name, i),
          baseBranch: plan.from?.branch ?? null,
          baseCommit: plan.from ? commitOf(plan.from.branch, plan.from.index) : null,
          message: messageOf(step, i),
          author: AUTHORS[(i + plan.name.length) % AUTHORS.length]!,
        },
        rules: effective,
        designs,
      });
      // Spread over the past weeks, a few hours apart, so charts have a time axis.
      const createdAt = new Date(now - plan.startDay * day + i * 3 * day + (i % 3) * 3600 * 1000);
      const stored = await ingestRun(ctx, project, report, { createdAt });
      await storeHardware(ctx, stored.id, report);
      if (stored.created) runsAdded++;
    }
  }
  log(runsAdded ? `seeded the demo project '${project.slug}' with ${runsAdded} runs` : `demo project '${project.slug}' already seeded`);
  if (ciToken) {
    // The secret goes to a file only its owner can read, never to the log (logs are collected
    // and kept; a token in them is a token for anyone who reads them).
    const file = join(ctx.config.root, '.data', 'demo-ci-token');
    mkdirSync(dirname(file), { recursive: true, mode: 0o700 });
    writeFileSync(file, ciToken + '\n', { mode: 0o600 });
    chmodSync(file, 0o600);
    log(`CI token of '${project.slug}' written to ${file} (readable by you only); use it as PLEAT_TOKEN`);
  }
  return { runsAdded, ciToken };
}
