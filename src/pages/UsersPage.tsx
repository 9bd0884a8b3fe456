import { useState, type FormEvent } from 'react';
import { errorMessage } from '../api/client';
import { useInviteUser, useMe, useUpdateUser, useUsers } from '../api/hooks';
import { can } from '../api/roles';
import type { PublicUser } from '../api/types';
import { FormError } from '../components/AuthFrame';
import { Forbidden } from '../components/Forbidden';
import { ColumnHeads, PageHeader, Panel, buttonClass, inputClass, tableClass, ScrollRegion } from '../components/Panel';
import { EmptyState, QueryState } from '../components/States';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function UsersPage() {
  useDocumentTitle('Users');
  const me = useMe();
  if (!can.manageUsers(me.data)) return <Forbidden what="Accounts are managed by admins." />;
  return <Users />;
}

function Users() {
  const users = useUsers();
  return (
    <div>
      <PageHeader title="Users">Every account on this Pleat server. New people are invited by e-mail and choose their own password.</PageHeader>
      <div className="grid items-start gap-6 xl:grid-cols-[minmax(0,3fr)_minmax(0,1fr)]">
        <Panel title="Accounts">
          <QueryState query={users} loadingLabel="Loading the accounts…">
            {({ users: list }) => (list.length === 0 ? <EmptyState title="No account" /> : <UserTable list={list} />)}
          </QueryState>
        </Panel>
        <InviteUser />
      </div>
    </div>
  );
}

function UserTable({ list }: { list: PublicUser[] }) {
  const me = useMe();
  const update = useUpdateUser();
  return (
    <ScrollRegion label="Accounts">
      <FormError error={update.error ? errorMessage(update.error) : null} />
      <table className={tableClass.table}>
        <caption className="sr-only">Accounts</caption>
        <ColumnHeads columns={['Name', 'E-mail', 'Admin', 'State']} />
        <tbody>
          {list.map((u) => {
            const self = me.data?.user.id === u.id;
            return (
              <tr key={u.id} data-user={u.email}>
                <th scope="row" className={`${tableClass.td} text-left font-medium`}>
                  {u.name}
                  {self && <span className="ml-1 text-xs font-normal text-ink-500">(you)</span>}
                </th>
                <td className={`${tableClass.td} text-ink-700`}>{u.email}</td>
                <td className={tableClass.td}>
                  <label className="inline-flex items-center gap-2">
                    <input
                      type="checkbox"
                      className="size-4 accent-ember-600"
                      checked={u.isAdmin}
                      disabled={self || update.isPending}
                      onChange={(e) => update.mutate({ id: u.id, isAdmin: e.target.checked })}
                    />
                    <span className="text-sm">{u.isAdmin ? 'admin' : 'no'}</span>
                    <span className="sr-only"> for {u.name}</span>
                  </label>
                </td>
                <td className={tableClass.td}>
                  <span className="inline-flex items-center gap-3">
                    <span className={u.active ? 'text-pass-700' : 'text-fail-700'}>{u.active ? 'active' : 'deactivated'}</span>
                    {!self && (
                      <button
                        type="button"
                        className={u.active ? buttonClass.danger : buttonClass.secondary}
                        disabled={update.isPending}
                        onClick={() => {
                          // Deactivating ends the person's sessions at once: asked first; reactivating is not.
                          if (u.active && !window.confirm(`Deactivate ${u.name} (${u.email})? They are signed out everywhere and can no longer sign in until an admin reactivates the account.`)) return;
                          update.mutate({ id: u.id, active: !u.active });
                        }}
                      >
                        {u.active ? 'Deactivate' : 'Reactivate'}
                        <span className="sr-only"> {u.name}</span>
                      </button>
                    )}
                  </span>
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </ScrollRegion>
  );
}

function InviteUser() {
  const invite = useInviteUser();
  const [email, setEmail] = useState('');
  const [isAdmin, setIsAdmin] = useState(false);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    invite.mutate({ email: email.trim(), isAdmin }, { onSuccess: () => setEmail('') });
  };
  return (
    <Panel title="Invite someone" subtitle="They get an e-mail with a link to set a name and password.">
      <form onSubmit={submit} className="space-y-3">
        <label className="block text-sm font-medium text-ink-800">
          E-mail
          <input type="email" required className={`${inputClass} mt-1`} value={email} onChange={(e) => setEmail(e.target.value)} />
        </label>
        <label className="flex items-center gap-2 text-sm">
          <input type="checkbox" className="size-4 accent-ember-600" checked={isAdmin} onChange={(e) => setIsAdmin(e.target.checked)} />
          Make them an admin
        </label>
        <FormError error={invite.error ? errorMessage(invite.error) : null} />
        {invite.data?.invitation && (
          <p role="status" className="text-sm text-pass-700">
            An invitation went to {invite.data.invitation.email}. A lead adds them to projects.
          </p>
        )}
        <button type="submit" className={buttonClass.primary} disabled={invite.isPending}>
          {invite.isPending ? 'Sending…' : 'Send the invitation'}
        </button>
      </form>
    </Panel>
  );
}
