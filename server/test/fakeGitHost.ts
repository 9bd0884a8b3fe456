// A local fake of the few git-host REST endpoints the pull-request feedback uses, for GitHub
// (under /github, the REST API's paths) and GitLab (under /gitlab/api/v4), started by a test on
// a random port. Paths, parameters and fields follow the hosts' published REST references
// (docs.github.com/rest: pulls, commit statuses, issue comments; docs.gitlab.com/api:
// merge_requests, commit statuses, notes). It keeps what was posted so a test can read it back,
// and can answer 500 to everything or stop listening (a host that is down).
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import express, { type Request, type Response } from 'express';

export interface FakeComment { id: number; number: number; body: string; edits: number }
export interface FakeStatus { sha: string; state: string; context: string; description: string; targetUrl: string }

export interface FakeGitHost {
  /** e.g. http://127.0.0.1:PORT/github and http://127.0.0.1:PORT/gitlab/api/v4 */
  githubUrl: string;
  gitlabUrl: string;
  token: string;
  /** Open pull/merge requests: branch -> number, per repository ("owner/name"). */
  openRequest(repository: string, branch: string, number: number): void;
  statuses: FakeStatus[];
  comments: FakeComment[];
  /** Every request, as "METHOD path" (no query). */
  requests: string[];
  /** 'ok', every request answered 500, or the port closed. */
  setMode(mode: 'ok' | 'fail'): void;
  stop(): Promise<void>;
}

export async function startFakeGitHost(token = 'fake-host-token-1234'): Promise<FakeGitHost> {
  const open = new Map<string, number>();
  const statuses: FakeStatus[] = [];
  const comments: FakeComment[] = [];
  const requests: string[] = [];
  let mode: 'ok' | 'fail' = 'ok';
  let nextId = 1000;
  const app = express();
  app.use(express.json());
  app.use((req, res, next) => {
    requests.push(`${req.method} ${req.path}`);
    if (mode === 'fail') {
      res.status(500).json({ message: 'Internal Server Error' });
      return;
    }
    next();
  });

  // ---- GitHub: `Authorization: token <t>` (or Bearer), JSON bodies.
  const gh = express.Router();
  gh.use((req, res, next) => {
    const m = /^(?:token|bearer) (.+)$/i.exec(req.get('authorization') ?? '');
    if (m?.[1] !== token) { res.status(401).json({ message: 'Bad credentials' }); return; }
    next();
  });
  const repoOf = (req: Request) => `${req.params.owner}/${req.params.repo}`;
  gh.get('/repos/:owner/:repo/pulls', (req, res) => {
    // head is "owner:branch"; state defaults to open (GitHub REST: List pull requests).
    const head = String(req.query.head ?? '');
    const [owner, ...rest] = head.split(':');
    const n = owner === req.params.owner && req.query.state === 'open' ? open.get(`${repoOf(req)}\u0000${rest.join(':')}`) : undefined;
    res.json(n === undefined ? [] : [{ number: n, state: 'open', html_url: `https://github.test/${repoOf(req)}/pull/${n}` }]);
  });
  gh.post('/repos/:owner/:repo/statuses/:sha', (req, res) => {
    const b = req.body as Record<string, string>;
    // state is one of error, failure, pending, success (GitHub REST: Create a commit status).
    if (!['error', 'failure', 'pending', 'success'].includes(b.state ?? '')) { res.status(422).json({ message: 'Validation Failed' }); return; }
    statuses.push({ sha: req.params.sha!, state: b.state!, context: b.context ?? 'default', description: b.description ?? '', targetUrl: b.target_url ?? '' });
    res.status(201).json({ id: nextId++, state: b.state });
  });
  gh.get('/repos/:owner/:repo/issues/:n/comments', (req, res) => {
    res.json(comments.filter((c) => c.number === Number(req.params.n)).map((c) => ({ id: c.id, body: c.body })));
  });
  gh.post('/repos/:owner/:repo/issues/:n/comments', (req, res) => {
    const c = { id: nextId++, number: Number(req.params.n), body: String(req.body.body), edits: 0 };
    comments.push(c);
    res.status(201).json({ id: c.id, body: c.body });
  });
  gh.patch('/repos/:owner/:repo/issues/comments/:id', (req, res) => {
    const c = comments.find((x) => x.id === Number(req.params.id));
    if (!c) { res.status(404).json({ message: 'Not Found' }); return; }
    c.body = String(req.body.body);
    c.edits++;
    res.json({ id: c.id, body: c.body });
  });
  app.use('/github', gh);

  // ---- GitLab: `PRIVATE-TOKEN: <t>`, the project as its URL-encoded path.
  const gl = express.Router();
  gl.use((req, res, next) => {
    if (req.get('private-token') !== token) { res.status(401).json({ message: '401 Unauthorized' }); return; }
    next();
  });
  gl.get('/projects/:id/merge_requests', (req, res) => {
    // state=opened, source_branch (GitLab API: List project merge requests).
    const n = req.query.state === 'opened' ? open.get(`${req.params.id}\u0000${String(req.query.source_branch)}`) : undefined;
    res.json(n === undefined ? [] : [{ iid: n, state: 'opened', web_url: `https://gitlab.test/${req.params.id}/-/merge_requests/${n}` }]);
  });
  gl.post('/projects/:id/statuses/:sha', (req, res) => {
    const b = req.body as Record<string, string>;
    // state is one of pending, running, success, failed, canceled (GitLab API: Set the pipeline status of a commit).
    if (!['pending', 'running', 'success', 'failed', 'canceled'].includes(b.state ?? '')) { res.status(400).json({ message: 'state does not have a valid value' }); return; }
    statuses.push({ sha: req.params.sha!, state: b.state!, context: b.name ?? 'default', description: b.description ?? '', targetUrl: b.target_url ?? '' });
    res.status(201).json({ id: nextId++, status: b.state });
  });
  gl.get('/projects/:id/merge_requests/:iid/notes', (req, res) => {
    res.json(comments.filter((c) => c.number === Number(req.params.iid)).map((c) => ({ id: c.id, body: c.body })));
  });
  gl.post('/projects/:id/merge_requests/:iid/notes', (req, res) => {
    const c = { id: nextId++, number: Number(req.params.iid), body: String(req.body.body), edits: 0 };
    comments.push(c);
    res.status(201).json({ id: c.id, body: c.body });
  });
  gl.put('/projects/:id/merge_requests/:iid/notes/:noteId', (req, res) => {
    const c = comments.find((x) => x.id === Number(req.params.noteId) && x.number === Number(req.params.iid));
    if (!c) { res.status(404).json({ message: '404 Not found' }); return; }
    c.body = String(req.body.body);
    c.edits++;
    res.json({ id: c.id, body: c.body });
  });
  app.use('/gitlab/api/v4', gl);
  app.use((req: Request, res: Response) => { res.status(404).json({ message: 'Not Found' }); });

  const server: Server = createServer(app);
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const port = (server.address() as AddressInfo).port;
  let stopped = false;
  return {
    githubUrl: `http://127.0.0.1:${port}/github`,
    gitlabUrl: `http://127.0.0.1:${port}/gitlab/api/v4`,
    token,
    openRequest: (repository, branch, number) => { open.set(`${repository}\u0000${branch}`, number); },
    statuses, comments, requests,
    setMode: (m) => { mode = m; },
    async stop() {
      if (stopped) return;
      stopped = true;
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}
