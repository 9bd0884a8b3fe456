import { useState, type FormEvent } from 'react';
import { errorMessage } from '../api/client';
import { useAddMember, useCancelInvitation, useInvitations, useMe, useMembers, useRemoveMember, useSetMemberRole } from '../api/hooks';
import { can, roleLabel } from '../api/roles';
import type { Member, Role } from '../api/types';
import { FormError } from '../components/AuthFrame';
import { Forbidden } from '../components/Forbidden';
import { useProjectContext } from '../components/ProjectLayout';
import { ColumnHeads, PageHeader, Panel, buttonClass, inputClass, tableClass, ScrollRegion } from '../components/Panel';
import { EmptyState, QueryState } from '../components/States';
import { ago, dateTime } from '../components/format';
import { useDocumentTitle } from '../components/useDocumentTitle';

const ROLES: Role[] = ['lead', 'engineer', 'viewer'];
const roleHelp: Record<Role, string> = {
  lead: 'sets the team rules, manages tokens and members',
  engineer: 'reads everything, tries designs, watches branches',
  viewer: 'reads',
};

export default function MembersPage() {
  const { project } = useProjectContext();
  useDocumentTitle(`Members · ${project.name}`);
  if (!can.manageMembers(project.role)) return <Forbidden what="Members are managed by the project's leads." />;
  return <Members slug={project.slug} name={project.name} />;
}

function Members({ slug, name }: { slug: string; name: string }) {
  const members = useMembers(slug);
  return (
    <div>
      <PageHeader title="Members">People who can open {name}, and what each may do.</PageHeader>
      <div className="grid items-start gap-6 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <Panel title="Members">
          <QueryState query={members} loadingLabel="Loading the members…">
            {({ members: list }) => (list.length === 0 ? <EmptyState title="No member yet" /> : <MemberTable slug={slug} list={list} />)}
          </QueryState>
        </Panel>
        <div className="space-y-6">
          <AddMember slug={slug} />
          <Invitations slug={slug} />
        </div>
      </div>
    </div>
  );
}

function MemberTable({ slug, list }: { slug: string; list: Member[] }) {
  const me = useMe();
  const setRole = useSetMemberRole(slug);
  const remove = useRemoveMember(slug);
  const error = setRole.error ?? remove.error;
  return (
    <ScrollRegion label="Members">
      <FormError error={error ? errorMessage(error) : null} />
      <table className={tableClass.table}>
        <caption className="sr-only">Members and their roles</caption>
        <ColumnHeads columns={['Name', 'E-mail', 'Role', 'Since', <span className="sr-only">Remove</span>]} />
        <tbody>
          {list.map((m) => (
            <tr key={m.user.id} data-member={m.user.email}>
              <th scope="row" className={`${tableClass.td} text-left font-medium`}>
                {m.user.name}
                {me.data?.user.id === m.user.id && <span className="ml-1 text-xs font-normal text-ink-500">(you)</span>}
                {!m.user.active && <span className="ml-1 text-xs font-normal text-fail-700">deactivated</span>}
              </th>
              <td className={`${tableClass.td} text-ink-700`}>{m.user.email}</td>
              <td className={tableClass.td}>
                <label className="sr-only" htmlFor={`role-${m.user.id}`}>
                  Role of {m.user.name}
                </label>
                <select
                  id={`role-${m.user.id}`}
                  className={`${inputClass} w-36 py-1`}
                  value={m.role}
                  disabled={setRole.isPending}
                  onChange={(e) => setRole.mutate({ userId: m.user.id, role: e.target.value as Role })}
                >
                  {ROLES.map((r) => (
                    <option key={r} value={r}>
                      {roleLabel[r]}
                    </option>
                  ))}
                </select>
              </td>
              <td className={`${tableClass.td} text-ink-700`} title={dateTime(m.since)}>
                {ago(m.since)}
              </td>
              <td className={`${tableClass.td} text-right`}>
                <button
                  type="button"
                  className={buttonClass.danger}
                  disabled={remove.isPending}
                  onClick={() => {
                    if (window.confirm(`Remove ${m.user.name} from the project?`)) remove.mutate(m.user.id);
                  }}
                >
                  Remove<span className="sr-only"> {m.user.name}</span>
                </button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </ScrollRegion>
  );
}

function AddMember({ slug }: { slug: string }) {
  const add = useAddMember(slug);
  const [email, setEmail] = useState('');
  const [role, setRole] = useState<Role>('engineer');
  const submit = (e: FormEvent) => {
    e.preventDefault();
    add.mutate({ email: email.trim(), role }, { onSuccess: () => setEmail('') });
  };
  return (
    <Panel title="Add a person" subtitle="Someone without an account gets an e-mail invitation.">
      <form onSubmit={submit} className="space-y-3">
        <label className="block text-sm font-medium text-ink-800">
          E-mail
          <input type="email" required className={`${inputClass} mt-1`} value={email} onChange={(e) => setEmail(e.target.value)} />
        </label>
        <fieldset>
          <legend className="text-sm font-medium text-ink-800">Role</legend>
          <div className="mt-1 space-y-1">
            {ROLES.map((r) => (
              <label key={r} className="flex items-center gap-2 text-sm">
                <input type="radio" name="new-member-role" value={r} checked={role === r} onChange={() => setRole(r)} className="accent-ember-600" />
                <span className="font-medium">{roleLabel[r]}</span>
                <span className="text-ink-600">— {roleHelp[r]}</span>
              </label>
            ))}
          </div>
        </fieldset>
        <FormError error={add.error ? errorMessage(add.error) : null} />
        {add.data && (
          <p role="status" className="text-sm text-pass-700">
            {add.data.member ? `${add.data.member.user.name} is now a member.` : `An invitation went to ${add.data.invitation?.email}.`}
          </p>
        )}
        <button type="submit" className={buttonClass.primary} disabled={add.isPending}>
          {add.isPending ? 'Adding…' : 'Add'}
        </button>
      </form>
    </Panel>
  );
}

function Invitations({ slug }: { slug: string }) {
  const q = useInvitations(slug);
  const cancel = useCancelInvitation(slug);
  return (
    <Panel id="pending-invitations" title="Pending invitations">
      <QueryState query={q} loadingLabel="Loading the invitations…">
        {({ invitations }) =>
          invitations.length === 0 ? (
            <p className="text-sm text-ink-600">No invitation is waiting for an answer.</p>
          ) : (
            <ul className="divide-y divide-ink-100">
              {invitations.map((i) => (
                <li key={i.id} className="flex items-center justify-between gap-3 py-2 text-sm">
                  <span>
                    <span className="font-medium">{i.email}</span> as {i.role ? roleLabel[i.role].toLowerCase() : 'member'}
                    <span className="block text-xs text-ink-600">
                      sent {ago(i.createdAt)}, expires {ago(i.expiresAt)}
                    </span>
                  </span>
                  <button type="button" className={buttonClass.danger} disabled={cancel.isPending} onClick={() => { if (window.confirm(`Withdraw the invitation of ${i.email}? Its link stops working.`)) cancel.mutate(i.id); }}>
                    Cancel<span className="sr-only"> the invitation of {i.email}</span>
                  </button>
                </li>
              ))}
            </ul>
          )
        }
      </QueryState>
    </Panel>
  );
}
