import { useState, type FormEvent } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { errorMessage } from '../api/client';
import { useAcceptInvitation, useInvitation } from '../api/hooks';
import { roleLabel } from '../api/roles';
import { AuthFrame, Field, FormError } from '../components/AuthFrame';
import { buttonClass, inputClass } from '../components/Panel';
import { ErrorState, Loading } from '../components/States';
import { dateTime } from '../components/format';
import { to } from '../links';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function AcceptInvitationPage() {
  useDocumentTitle('Invitation');
  const { token = '' } = useParams();
  const navigate = useNavigate();
  const q = useInvitation(token);
  const accept = useAcceptInvitation(token);
  const [name, setName] = useState('');
  const [password, setPassword] = useState('');
  const [confirm, setConfirm] = useState('');
  const [problem, setProblem] = useState<string | null>(null);

  // Once accepted, the link is used up: the page no longer depends on the invitation query.
  if (accept.isSuccess) {
    const r = accept.data;
    const joined = r.project ? `${r.role ? roleLabel[r.role].toLowerCase() : 'member'} in ${r.project.name}` : 'a user of Pleat';
    return (
      <AuthFrame title="Welcome to Pleat">
        <p className="text-ink-700">
          You are now {joined}.{r.signedIn ? '' : ' Sign in with your existing password to continue.'}
        </p>
        <div className="mt-6">
          {r.signedIn ? (
            <button type="button" className={buttonClass.primary} onClick={() => navigate(r.project ? to.project(r.project.slug) : to.home())}>
              {r.project ? `Open ${r.project.name}` : 'Open Pleat'}
            </button>
          ) : (
            <Link to={to.signIn(r.project ? to.project(r.project.slug) : undefined)} className={buttonClass.primary}>
              Sign in
            </Link>
          )}
        </div>
      </AuthFrame>
    );
  }

  if (q.isPending)
    return (
      <AuthFrame title="Your invitation">
        <Loading label="Reading the invitation…" />
      </AuthFrame>
    );
  if (q.error || !q.data)
    return (
      <AuthFrame title="Your invitation">
        <ErrorState error={q.error} title="This invitation cannot be used" />
        <p className="mt-4 text-sm">
          <Link to={to.signIn()} className={buttonClass.link}>
            Sign in
          </Link>{' '}
          if you have an account already.
        </p>
      </AuthFrame>
    );

  const { invitation, accountExists } = q.data;
  const what = invitation.project
    ? `${invitation.role ? roleLabel[invitation.role].toLowerCase() : 'member'} in ${invitation.project.name}`
    : invitation.isAdmin
      ? 'an admin of Pleat'
      : 'a user of Pleat';

  const submit = (e: FormEvent) => {
    e.preventDefault();
    setProblem(null);
    if (!accountExists) {
      if (password.length < 8) return setProblem('Choose a password of at least 8 characters.');
      if (password !== confirm) return setProblem('The two passwords differ.');
      accept.mutate({ name: name.trim(), password });
    } else {
      accept.mutate({});
    }
  };

  return (
    <AuthFrame title="Join Pleat">
      <p className="mb-6 text-ink-700">
        <strong>{invitation.email}</strong> is invited to be {what}. The link is valid until {dateTime(invitation.expiresAt)}.
      </p>
      <form onSubmit={submit} className="space-y-4">
        {!accountExists && (
          <>
            <Field id="name" label="Your name">
              <input id="name" autoComplete="name" required className={inputClass} value={name} onChange={(e) => setName(e.target.value)} />
            </Field>
            <Field id="new-password" label="Choose a password" hint="At least 8 characters.">
              <input
                id="new-password"
                type="password"
                autoComplete="new-password"
                required
                minLength={8}
                aria-describedby="new-password-hint"
                className={inputClass}
                value={password}
                onChange={(e) => setPassword(e.target.value)}
              />
            </Field>
            <Field id="confirm-password" label="The same password again">
              <input
                id="confirm-password"
                type="password"
                autoComplete="new-password"
                required
                className={inputClass}
                value={confirm}
                onChange={(e) => setConfirm(e.target.value)}
              />
            </Field>
          </>
        )}
        {accountExists && <p className="text-sm text-ink-700">You have an account already; accepting adds this access to it.</p>}
        <FormError error={problem ?? (accept.error ? errorMessage(accept.error) : null)} />
        <button type="submit" className={`${buttonClass.primary} w-full`} disabled={accept.isPending}>
          {accept.isPending ? 'Accepting…' : accountExists ? 'Accept the invitation' : 'Create my account'}
        </button>
      </form>
    </AuthFrame>
  );
}
