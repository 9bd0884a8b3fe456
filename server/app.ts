// The Express application: the API under /api and the built web app (dist/web) for every other
// path, with the single-page-app fallback. No state lives in the process: sessions are signed
// tokens, counters and everything else are in PostgreSQL.
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import cookieParser from 'cookie-parser';
import express, { type Express } from 'express';
import helmet from 'helmet';
import type { AppContext } from './context';
import { lookUpCaller, readCredentials } from './http/auth';
import { apiNotFound, errorHandler } from './http/errors';
import { sameOriginOnly } from './http/origin';
import { outageMonitor } from './http/outage';
import { analyzeRoutes } from './resources/analyze/routes';
import { authRoutes } from './resources/auth/routes';
import { branchRoutes } from './resources/branches/routes';
import { devRoutes } from './resources/dev/routes';
import { healthRoutes } from './resources/health/routes';
import { hostRoutes } from './resources/hosts/routes';
import { jobRoutes } from './resources/jobs/routes';
import { memberRoutes } from './resources/members/routes';
import { projectRoutes } from './resources/projects/routes';
import { ruleRoutes } from './resources/rules/routes';
import { runOneQueryRoutes, runRoutes } from './resources/runs/routes';
import { tokenRoutes } from './resources/tokens/routes';
import { userRoutes } from './resources/users/routes';
import { watchRoutes } from './resources/watches/routes';

export function createApp(ctx: AppContext): Express {
  const app = express();
  app.disable('x-powered-by');
  // No ETag on res.send/res.json: every API answer is Cache-Control: no-store, so no client keeps
  // one to revalidate (the web client's fetches included), and hashing every body (a history page
  // is tens of KiB) was work for nothing. Static files keep theirs (express.static, sendFile).
  app.set('etag', false);
  app.set('trust proxy', ctx.config.trustProxy);
  const https = ctx.config.publicUrl.startsWith('https:');
  // The usual security headers (helmet). The policy allows what the built web app loads: its own
  // scripts, styles and fonts, inline style attributes (recharts and React set them), data: URLs
  // (the favicon, chart images); nothing from other hosts, and no framing.
  app.use(helmet({
    contentSecurityPolicy: {
      useDefaults: false,
      directives: {
        defaultSrc: ["'self'"],
        scriptSrc: ["'self'"],
        styleSrc: ["'self'", "'unsafe-inline'"],
        imgSrc: ["'self'", 'data:'],
        fontSrc: ["'self'", 'data:'],
        connectSrc: ["'self'"],
        objectSrc: ["'none'"],
        baseUri: ["'self'"],
        formAction: ["'self'"],
        frameAncestors: ["'none'"],
        ...(https ? { upgradeInsecureRequests: [] } : {}),
      },
    },
    frameguard: { action: 'deny' },
    referrerPolicy: { policy: 'same-origin' },
    // Only over https: on http://127.0.0.1 the header would pin nothing and confuse a later https.
    strictTransportSecurity: https ? { maxAge: 15552000, includeSubDomains: false } : false,
  }));

  // The bare liveness route answers before any middleware: the benchmark's baseline.
  app.use(healthRoutes(ctx));

  // What every /api request passes, in this order, as one middleware (one layer of Express's
  // router instead of four): no caching, no NUL, the cookies, the cross-site check, the credentials.
  const cookies = cookieParser();
  const origin = sameOriginOnly(ctx);
  const credentials = readCredentials(ctx);
  app.use('/api', (req, res, next) => {
    res.setHeader('Cache-Control', 'no-store');
    // PostgreSQL text cannot hold NUL: refuse it in paths and queries before it reaches a query.
    if (req.originalUrl.includes('%00')) {
      res.status(400).json({ error: { code: 'bad-path', message: 'The address contains a NUL character (%00).' } });
      return;
    }
    cookies(req, res, (err?: unknown) => {
      if (err) return next(err);
      origin(req, res, (err2?: unknown) => (err2 ? next(err2) : credentials(req, res, next)));
    });
  });
  // The routes under load find their caller together with their project, in one query
  // (projectAccess); every route after lookUpCaller has req.actor from its own query.
  app.use(runOneQueryRoutes(ctx));
  app.use('/api', lookUpCaller(ctx));
  for (const routes of [authRoutes, projectRoutes, branchRoutes, runRoutes, ruleRoutes, tokenRoutes, hostRoutes, memberRoutes, userRoutes, watchRoutes, analyzeRoutes, jobRoutes, devRoutes]) {
    app.use(routes(ctx));
  }
  app.use('/api', apiNotFound);

  const index = join(ctx.config.webDir, 'index.html');
  app.use(express.static(ctx.config.webDir, { index: false, maxAge: '1h' }));
  app.get('/{*splat}', (_req, res) => {
    if (!existsSync(index)) {
      res.status(404).type('text/plain').send('The web app is not built yet: run `npm run build`, then reload.\n');
      return;
    }
    // The file can vanish between the check and the read while a build rewrites dist/web.
    res.set('Cache-Control', 'no-cache').sendFile(index, (err) => {
      if (err && !res.headersSent) res.status(503).type('text/plain').send('The web app is being rebuilt; reload in a moment.\n');
    });
  });

  ctx.outage ??= outageMonitor(ctx.db.sequelize, ctx.log);
  app.use(errorHandler(ctx.log, ctx.outage, ctx.config.outageRetrySeconds));
  return app;
}
