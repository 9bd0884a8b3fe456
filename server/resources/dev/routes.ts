// GET /api/dev/mail (list) and GET /api/dev/mail/:file (one message as text), development only:
// the mail that the fake SMTP server wrote to .data/mail/.
import { readdir, readFile, stat } from 'node:fs/promises';
import { join } from 'node:path';
import { Router } from 'express';
import type { AppContext } from '../../context';
import { notFound } from '../../http/errors';
import { canReadDevMail } from './policy';

function header(raw: string, name: string): string | null {
  const m = new RegExp(`^${name}:\\s*(.*(?:\\r?\\n[ \\t].*)*)`, 'im').exec(raw.split(/\r?\n\r?\n/)[0] ?? '');
  return m ? m[1]!.replace(/\r?\n[ \t]+/g, ' ').trim() : null;
}

export function devRoutes(ctx: AppContext): Router {
  const router = Router();
  const dir = ctx.config.devMailDir;
  const enabled = () => !!dir && canReadDevMail(ctx.config.env);

  router.get('/api/dev/mail', async (_req, res) => {
    if (!enabled()) throw notFound();
    const files = (await readdir(dir!).catch(() => [] as string[])).filter((f) => f.endsWith('.eml')).sort().reverse().slice(0, 100);
    const mail = await Promise.all(files.map(async (file) => {
      const raw = await readFile(join(dir!, file), 'utf8');
      return { file, to: header(raw, 'To'), subject: header(raw, 'Subject'), date: (await stat(join(dir!, file))).mtime };
    }));
    res.json({ folder: dir, mail });
  });

  router.get('/api/dev/mail/:file', async (req, res) => {
    if (!enabled() || !/^[\w.-]+\.eml$/.test(req.params.file)) throw notFound();
    const raw = await readFile(join(dir!, req.params.file), 'utf8').catch(() => null);
    if (raw === null) throw notFound();
    res.type('text/plain').send(raw);
  });

  return router;
}
