import { useState, type FormEvent } from 'react';
import { errorMessage } from '../api/client';
import { useCreateToken, useRevokeToken, useTokens } from '../api/hooks';
import { can } from '../api/roles';
import type { CiToken } from '../api/types';
import { FormError } from '../components/AuthFrame';
import { Forbidden } from '../components/Forbidden';
import { useProjectContext } from '../components/ProjectLayout';
import { ColumnHeads, PageHeader, Panel, buttonClass, inputClass, tableClass, ScrollRegion } from '../components/Panel';
import { EmptyState, QueryState } from '../components/States';
import { ago, dateTime } from '../components/format';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function TokensPage() {
  const { project } = useProjectContext();
  useDocumentTitle(`CI tokens · ${project.name}`);
  if (!can.manageTokens(project.role)) return <Forbidden what="CI tokens are managed by the project's leads." />;
  return <Tokens slug={project.slug} />;
}

function Tokens({ slug }: { slug: string }) {
  const tokens = useTokens(slug);
  const create = useCreateToken(slug);
  const [name, setName] = useState('');
  const [copied, setCopied] = useState(false);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    setCopied(false);
    create.mutate(name.trim(), { onSuccess: () => setName('') });
  };

  return (
    <div>
      <PageHeader title="CI tokens">
        A token lets CI upload runs to this project, and nothing else. Set it as <code className="rounded bg-ink-100 px-1">PLEAT_TOKEN</code> in the CI job's secrets.
      </PageHeader>
      <div className="grid items-start gap-6 xl:grid-cols-[minmax(0,2fr)_minmax(0,3fr)]">
        <Panel title="New token">
          <form onSubmit={submit} className="flex flex-wrap items-end gap-3">
            <label className="min-w-56 flex-1 text-sm font-medium text-ink-800">
              Name
              <input
                className={`${inputClass} mt-1`}
                required
                maxLength={100}
                placeholder="e.g. main pipeline"
                value={name}
                onChange={(e) => setName(e.target.value)}
              />
            </label>
            <button type="submit" className={buttonClass.primary} disabled={create.isPending}>
              {create.isPending ? 'Creating…' : 'Create token'}
            </button>
          </form>
          <div className="mt-3">
            <FormError error={create.error ? errorMessage(create.error) : null} />
          </div>
          {create.data && (
            <div role="status" className="mt-4 rounded-lg border-2 border-ember-500 bg-ember-50 p-4" data-testid="new-token">
              <p className="font-bold text-ember-800">Copy the token “{create.data.token.name}” now: it is shown only this once.</p>
              <div className="mt-2 flex items-center gap-2">
                <code className="min-w-0 flex-1 rounded border border-ember-200 bg-white px-2 py-1.5 text-sm break-all" data-testid="token-secret">
                  {create.data.secret}
                </code>
                <button
                  type="button"
                  className={buttonClass.secondary}
                  onClick={() => void navigator.clipboard?.writeText(create.data!.secret).then(() => setCopied(true))}
                >
                  {copied ? 'Copied' : 'Copy'}
                </button>
              </div>
              <p className="mt-2 text-xs text-ember-800">Pleat keeps only a hash of it. If it is lost, revoke it and create another.</p>
            </div>
          )}
        </Panel>
        <Panel title="Tokens of this project">
          <QueryState query={tokens} loadingLabel="Loading the tokens…">
            {({ tokens: list }) =>
              list.length === 0 ? <EmptyState title="No token yet">Create one for each CI pipeline that uploads runs.</EmptyState> : <TokenTable slug={slug} list={list} />
            }
          </QueryState>
        </Panel>
      </div>
    </div>
  );
}

function TokenTable({ slug, list }: { slug: string; list: CiToken[] }) {
  const revoke = useRevokeToken(slug);
  return (
    <ScrollRegion label="CI tokens">
      <FormError error={revoke.error ? errorMessage(revoke.error) : null} />
      <table className={tableClass.table}>
        <caption className="sr-only">CI tokens</caption>
        <ColumnHeads columns={['Name', 'Starts with', 'Created', 'Last used', 'State']} />
        <tbody>
          {list.map((t) => (
            <tr key={t.id} data-token={t.name}>
              <th scope="row" className={`${tableClass.td} text-left font-medium`}>
                {t.name}
              </th>
              <td className={`${tableClass.td} text-ink-700`}>
                <code>{t.prefix}…</code>
              </td>
              <td className={`${tableClass.td} text-ink-700`} title={dateTime(t.createdAt)}>
                {ago(t.createdAt)}
                {t.createdBy ? ` by ${t.createdBy.name}` : ''}
              </td>
              <td className={`${tableClass.td} text-ink-700`}>{t.lastUsedAt ? ago(t.lastUsedAt) : 'never'}</td>
              <td className={tableClass.td}>
                {t.revokedAt ? (
                  <span className="text-ink-500" title={dateTime(t.revokedAt)}>
                    revoked {ago(t.revokedAt)}
                  </span>
                ) : (
                  <button
                    type="button"
                    className={buttonClass.danger}
                    disabled={revoke.isPending}
                    onClick={() => {
                      if (window.confirm(`Revoke the token “${t.name}”? CI jobs that use it can no longer upload.`)) revoke.mutate(t.id);
                    }}
                  >
                    Revoke<span className="sr-only"> {t.name}</span>
                  </button>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </ScrollRegion>
  );
}
