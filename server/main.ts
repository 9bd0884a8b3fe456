// The server's entry point, with one sub-command per job:
//   serve    apply pending migrations, then serve the API and the web app (default)
//   migrate  apply pending migrations and exit
//   seed     load the demo (accounts, project, history from the real engine); idempotent
//   mail     run the fake SMTP server that writes every message to .data/mail/
//   worker   take plan and sweep jobs from the PostgreSQL queue and run them (docs/server.md, Jobs)
import { createServer } from 'node:http';
import { join } from 'node:path';
import { createApp } from './app';
import { loadConfig } from './config';
import type { AppContext } from './context';
import { connectDb } from './db/index';
import { migrate } from './db/migrate';
import { startFakeSmtp } from './mail/fakeSmtp';
import { createJobQueue } from './jobs/queue';
import { createMailer } from './mail/mailer';
import { startMaintenance } from './maintenance';

const log = (msg: string) => process.stderr.write(`pleat-server: ${msg}\n`);

async function main(command: string): Promise<void> {
  const config = loadConfig();
  if (command === 'mail') {
    const dir = join(config.root, '.data', 'mail');
    const smtp = await startFakeSmtp({ port: config.smtp?.port ?? 4125, dir });
    log(`fake SMTP server on 127.0.0.1:${smtp.port}, writing mail to ${dir}`);
    const stop = () => void smtp.close().then(() => process.exit(0));
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
    return;
  }
  const db = connectDb({ url: config.databaseUrl, schema: config.dbSchema, pool: config.dbPool });
  try {
    await db.sequelize.authenticate();
  } catch (err) {
    throw new Error(`cannot reach PostgreSQL at ${config.databaseUrl.replace(/:[^:@/]*@/, ':***@')} (${(err as Error).message}); start it with \`bash scripts/pg.sh\``);
  }
  if (command === 'migrate' || ((command === 'serve' || command === 'worker') && process.env.PLEAT_MIGRATE !== '0')) {
    const applied = await migrate(db.sequelize);
    if (applied.length) log(`applied migrations ${applied.join(', ')}`);
    if (command === 'migrate') {
      if (!applied.length) log('schema is up to date');
      await db.close();
      return;
    }
  }
  if (command === 'worker') {
    const { loadPlanner } = await import('./jobs/planner');
    const { startWorker } = await import('./jobs/worker');
    const worker = await startWorker(config, db, await loadPlanner(), log);
    const stop = () => void worker.stop().then(() => db.close()).then(() => process.exit(0), () => process.exit(1));
    process.once('SIGINT', stop);
    process.once('SIGTERM', stop);
    return;
  }
  const mail = createMailer(config.smtp, log);
  const queue = createJobQueue(config, log);
  const ctx: AppContext = { config, db, mail, log, queue };
  if (command === 'seed') {
    const { seedDemo } = await import('./seed/seed');
    await seedDemo(ctx, log);
    await mail.settled();
    mail.close();
    await queue.close();
    await db.close();
    return;
  }
  if (command !== 'serve') throw new Error(`unknown command '${command}' (serve, migrate, seed, mail, worker)`);
  const server = createServer(createApp(ctx));
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(config.port, config.host, () => resolve());
  });
  log(`listening on http://${config.host}:${config.port}`);
  const stopMaintenance = config.maintenanceMs > 0 ? startMaintenance(ctx, config.maintenanceMs) : () => {};
  // Finish the requests in flight (at most a few seconds), send queued mail, then close the pool.
  const stop = () => {
    stopMaintenance();
    server.close(async () => {
      // A handler whose client hung up may still be finishing its queries.
      await new Promise((resolve) => setTimeout(resolve, 500));
      await mail.settled();
      mail.close();
      await ctx.analyzer?.close();
      await queue.close();
      await db.close();
      process.exit(0);
    });
    server.closeIdleConnections();
    setTimeout(() => server.closeAllConnections(), 5000).unref();
  };
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
}

main(process.argv[2] ?? 'serve').catch((err) => {
  log(err instanceof Error ? err.message : String(err));
  process.exit(1);
});
