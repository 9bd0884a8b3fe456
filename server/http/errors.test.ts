// The error handler: JSON errors with a code, and nothing of the server's insides for a 500.
import express from 'express';
import supertest from 'supertest';
import { describe, expect, it } from 'vitest';
import { HttpError, errorHandler } from './errors';

function appThrowing(err: unknown) {
  const logged: string[] = [];
  const app = express();
  app.get('/boom', async () => { throw err; });
  app.use(errorHandler((m) => logged.push(m)));
  return { app, logged };
}

describe('errorHandler', () => {
  it('turns an unexpected error into a 500 without its message or stack, and logs it', async () => {
    const { app, logged } = appThrowing(new Error('password=hunter2 in /srv/secret.ts'));
    const res = await supertest(app).get('/boom');
    expect(res.status).toBe(500);
    expect(res.body).toEqual({ error: { code: 'internal', message: expect.any(String) } });
    expect(res.text).not.toContain('hunter2');
    expect(res.text).not.toMatch(/at .*\.ts:\d+/);
    expect(logged.join('\n')).toContain('hunter2');
  });

  it('passes an HttpError through with its status, code and details', async () => {
    const { app } = appThrowing(new HttpError(409, 'slug-taken', 'taken', [{ path: '/slug' }]));
    const res = await supertest(app).get('/boom');
    expect(res.status).toBe(409);
    expect(res.body).toEqual({ error: { code: 'slug-taken', message: 'taken', details: [{ path: '/slug' }] } });
  });
});
