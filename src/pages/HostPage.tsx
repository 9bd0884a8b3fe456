import { useEffect, useState, type FormEvent } from 'react';
import { errorMessage } from '../api/client';
import { useHost, useRemoveHost, useSaveHost } from '../api/hooks';
import { can } from '../api/roles';
import type { HostConnection, HostKind } from '../api/types';
import { FormError } from '../components/AuthFrame';
import { Forbidden } from '../components/Forbidden';
import { useProjectContext } from '../components/ProjectLayout';
import { PageHeader, Panel, buttonClass, inputClass } from '../components/Panel';
import { QueryState } from '../components/States';
import { ago, dateTime } from '../components/format';
import { useDocumentTitle } from '../components/useDocumentTitle';

const KINDS: { kind: HostKind; label: string; apiUrl: string; repository: string }[] = [
  { kind: 'github', label: 'GitHub', apiUrl: 'https://api.github.com', repository: 'owner/name' },
  { kind: 'gitlab', label: 'GitLab', apiUrl: 'https://gitlab.com/api/v4', repository: 'group/subgroup/name' },
];

export default function HostPage() {
  const { project } = useProjectContext();
  useDocumentTitle(`Git host · ${project.name}`);
  if (!can.manageHost(project.role)) return <Forbidden what="The git host is connected by the project's leads." />;
  return <Host slug={project.slug} />;
}

function Host({ slug }: { slug: string }) {
  const host = useHost(slug);
  return (
    <div>
      <PageHeader title="Git host">
        Connected, Pleat puts a commit status and one summary comment on the open pull or merge request of every branch it
        gets a run of, and edits that comment on each push. The host's failures never fail an upload; they show above the
        project's pages.
      </PageHeader>
      <QueryState query={host} loadingLabel="Loading the connection…">
        {({ host: current }) => <HostForm slug={slug} current={current} />}
      </QueryState>
    </div>
  );
}

function HostForm({ slug, current }: { slug: string; current: HostConnection | null }) {
  const save = useSaveHost(slug);
  const remove = useRemoveHost(slug);
  const [kind, setKind] = useState<HostKind>(current?.kind ?? 'github');
  const [apiUrl, setApiUrl] = useState(current?.apiUrl ?? '');
  const [repository, setRepository] = useState(current?.repository ?? '');
  const [token, setToken] = useState('');
  useEffect(() => setToken(''), [current?.token.last4]);
  const shape = KINDS.find((k) => k.kind === kind)!;

  const submit = (e: FormEvent) => {
    e.preventDefault();
    save.mutate({ kind, repository: repository.trim(), ...(apiUrl.trim() ? { apiUrl: apiUrl.trim() } : {}), ...(token ? { token } : {}) });
  };

  return (
    <div className="grid items-start gap-6 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
      <Panel title={current ? 'Connection' : 'Connect a host'}>
        <form onSubmit={submit} className="grid gap-4">
          <fieldset>
            <legend className="text-sm font-medium text-ink-800">Host</legend>
            <div className="mt-1 flex gap-4">
              {KINDS.map((k) => (
                <label key={k.kind} className="flex items-center gap-2 text-sm">
                  <input type="radio" name="kind" value={k.kind} checked={kind === k.kind} onChange={() => setKind(k.kind)} />
                  {k.label}
                </label>
              ))}
            </div>
          </fieldset>
          <div>
            <label className="text-sm font-medium text-ink-800">
              API address
              <input className={`${inputClass} mt-1`} type="url" aria-describedby="host-api-hint" placeholder={shape.apiUrl} value={apiUrl} onChange={(e) => setApiUrl(e.target.value)} />
            </label>
            <p id="host-api-hint" className="mt-1 text-xs text-ink-600">Empty: {shape.apiUrl}. A host of your own: its /api/v3 (GitHub) or /api/v4 (GitLab).</p>
          </div>
          <label className="text-sm font-medium text-ink-800">
            Repository
            <input className={`${inputClass} mt-1`} required placeholder={shape.repository} value={repository} onChange={(e) => setRepository(e.target.value)} />
          </label>
          <div>
            <label className="text-sm font-medium text-ink-800">
              Token
              <input
                className={`${inputClass} mt-1`}
                type="password"
                aria-describedby="host-token-hint"
                autoComplete="off"
                required={!current}
                placeholder={current ? `stored, ends in …${current.token.last4}; type a new one to replace it` : 'a token that may post statuses and comments'}
                value={token}
                onChange={(e) => setToken(e.target.value)}
              />
            </label>
            <p id="host-token-hint" className="mt-1 text-xs text-ink-600">Kept encrypted on the server and never shown again.</p>
          </div>
          <FormError error={save.error ? errorMessage(save.error) : remove.error ? errorMessage(remove.error) : null} />
          <div className="flex flex-wrap gap-3">
            <button type="submit" className={buttonClass.primary} disabled={save.isPending}>
              {save.isPending ? 'Saving…' : current ? 'Save the connection' : 'Connect'}
            </button>
            {current && (
              <button
                type="button"
                className={buttonClass.danger}
                disabled={remove.isPending}
                onClick={() => {
                  if (window.confirm(`Disconnect ${current.repository}? Pleat stops posting to its pull requests and forgets the stored token.`)) remove.mutate(undefined);
                }}
              >
                Disconnect
              </button>
            )}
          </div>
          {save.isSuccess && <p role="status" className="text-sm text-pass-700">Saved.</p>}
        </form>
      </Panel>
      {current && (
        <Panel title="Last feedback">
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-2 text-sm" data-testid="host-outcome">
            <dt className="text-ink-600">Repository</dt>
            <dd>
              {current.webUrl ? (
                <a className="text-ember-700 underline" href={current.webUrl} rel="noreferrer">
                  {current.repository}
                </a>
              ) : (
                current.repository
              )}
            </dd>
            <dt className="text-ink-600">Last posted</dt>
            <dd>{current.lastOkAt ? `${dateTime(current.lastOkAt)} (${ago(current.lastOkAt)})` : 'not yet'}</dd>
            <dt className="text-ink-600">Last failure</dt>
            <dd>{current.lastErrorAt ? `${dateTime(current.lastErrorAt)}: ${current.lastError}` : 'none'}</dd>
            <dt className="text-ink-600">Changed</dt>
            <dd>
              {dateTime(current.updatedAt)}
              {current.updatedBy ? ` by ${current.updatedBy.name}` : ''}
            </dd>
          </dl>
        </Panel>
      )}
    </div>
  );
}
