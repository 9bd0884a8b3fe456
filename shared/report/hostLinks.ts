// Where a design file's line is on the git host's web pages, at the run's commit: the pull-request
// summary (server) and the run page (web) link to it the same way (docs/server.md, Git hosts).
import type { HostKind } from './api';

/**
 * `<webUrl>/blob/<commit>/<path>#L<line>` (GitHub) or `<webUrl>/-/blob/...` (GitLab); null when
 * the host's web address is unknown or the path does not lie in the repository. Report paths are
 * relative to the config file's folder, which is taken as the repository root (docs/cli.md), so
 * absolute and `../` paths are not linked.
 */
export function hostFileUrl(host: { kind: HostKind; webUrl: string | null }, commit: string, file: string, line: number | null | undefined): string | null {
  if (!host.webUrl || /^(\/|\.\.\/|[A-Za-z]:)/.test(file)) return null;
  const path = file.split('/').map(encodeURIComponent).join('/');
  return `${host.webUrl}${host.kind === 'gitlab' ? '/-' : ''}/blob/${commit}/${path}${line ? `#L${line}` : ''}`;
}
