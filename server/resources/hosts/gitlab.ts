// GitLab through its REST API (v4) with fetch: merge_requests by source branch, commit statuses,
// and the merge request's notes. The repository is the project's path ("group/name") or its id.
import { STATUS_CONTEXT, hostFetch, type HostClient, type HostSettings } from './client';

/** A host's answer that was not a success, with its status for the caller to tell 404 apart. */
export class HostHttpError extends Error {
  constructor(readonly status: number, message: string) {
    super(message);
  }
}

export function gitlabClient(s: HostSettings): HostClient {
  const base = `${s.apiUrl.replace(/\/+$/, '')}/projects/${encodeURIComponent(s.repository)}`;
  const get = hostFetch(s);
  async function call<T>(method: string, path: string, body?: object): Promise<{ data: T; headers: Headers }> {
    const res = await get(`${base}${path}`, {
      method,
      headers: { 'PRIVATE-TOKEN': s.token, Accept: 'application/json', ...(body ? { 'Content-Type': 'application/json' } : {}) },
      body: body ? JSON.stringify(body) : undefined,
    });
    const text = await res.text();
    if (!res.ok) {
      let message = text.slice(0, 200);
      try { message = JSON.stringify((JSON.parse(text) as { message?: unknown }).message ?? message); } catch { /* not JSON: keep the text */ }
      throw new HostHttpError(res.status, `${res.status} ${res.statusText}${message ? `: ${message}` : ''}`);
    }
    return { data: (text ? JSON.parse(text) : null) as T, headers: res.headers };
  }
  return {
    async findOpenRequest(branch) {
      const { data } = await call<{ iid: number; web_url?: string }[]>('GET', `/merge_requests?source_branch=${encodeURIComponent(branch)}&state=opened&per_page=10`);
      const mr = data[0];
      return mr ? { number: mr.iid, url: mr.web_url ?? null } : null;
    },
    async postStatus(sha, state, description, targetUrl) {
      await call('POST', `/statuses/${encodeURIComponent(sha)}`, {
        state: state === 'success' ? 'success' : 'failed', name: STATUS_CONTEXT, description, target_url: targetUrl,
      });
    },
    async updateComment(number, commentId, body) {
      try {
        await call('PUT', `/merge_requests/${number}/notes/${encodeURIComponent(commentId)}`, { body });
        return 'ok';
      } catch (err) {
        if (err instanceof HostHttpError && err.status === 404) return 'gone';
        throw err;
      }
    },
    async findComment(number, marker) {
      // Pages of 100 notes, following x-next-page; a merge request with more than 20 pages is not searched further.
      for (let page = 1; page <= 20; page++) {
        const { data, headers } = await call<{ id: number; body?: string }[]>('GET', `/merge_requests/${number}/notes?per_page=100&page=${page}`);
        const hit = data.find((n) => n.body?.includes(marker));
        if (hit) return String(hit.id);
        if (!headers.get('x-next-page')) return null;
      }
      return null;
    },
    async createComment(number, body) {
      const { data } = await call<{ id: number }>('POST', `/merge_requests/${number}/notes`, { body });
      return String(data.id);
    },
  };
}
