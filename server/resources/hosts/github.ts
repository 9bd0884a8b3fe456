// GitHub through its SDK (@octokit/rest): pulls.list, repos.createCommitStatus and the issue
// comments of the pull request (a pull request's conversation is its issue's).
import { Octokit } from '@octokit/rest';
import { STATUS_CONTEXT, hostFetch, type HostClient, type HostSettings } from './client';

const silent = { debug: () => {}, info: () => {}, warn: () => {}, error: () => {} };

export function githubClient(s: HostSettings): HostClient {
  const [owner = '', repo = ''] = s.repository.split('/');
  const octokit = new Octokit({
    auth: s.token, baseUrl: s.apiUrl, userAgent: 'pleat-server', log: silent,
    request: { fetch: hostFetch(s) },
  });
  return {
    async findOpenRequest(branch) {
      // head=owner:branch finds pull requests from the repository's own branches (not from forks).
      const { data } = await octokit.rest.pulls.list({ owner, repo, head: `${owner}:${branch}`, state: 'open', per_page: 10 });
      const pr = data[0];
      return pr ? { number: pr.number, url: pr.html_url ?? null } : null;
    },
    async postStatus(sha, state, description, targetUrl) {
      await octokit.rest.repos.createCommitStatus({ owner, repo, sha, state, description, target_url: targetUrl, context: STATUS_CONTEXT });
    },
    async updateComment(_number, commentId, body) {
      try {
        await octokit.rest.issues.updateComment({ owner, repo, comment_id: Number(commentId), body });
        return 'ok';
      } catch (err) {
        if ((err as { status?: number }).status === 404) return 'gone';
        throw err;
      }
    },
    async findComment(number, marker) {
      for await (const page of octokit.paginate.iterator(octokit.rest.issues.listComments, { owner, repo, issue_number: number, per_page: 100 })) {
        const hit = page.data.find((c) => c.body?.includes(marker));
        if (hit) return String(hit.id);
      }
      return null;
    },
    async createComment(number, body) {
      const { data } = await octokit.rest.issues.createComment({ owner, repo, issue_number: number, body });
      return String(data.id);
    },
  };
}
