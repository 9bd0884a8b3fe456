import { useState, type FormEvent } from 'react';
import { useNavigate, useSearchParams } from 'react-router-dom';
import { errorMessage } from '../api/client';
import { useLogin } from '../api/hooks';
import { AuthFrame, Field, FormError } from '../components/AuthFrame';
import { buttonClass, inputClass } from '../components/Panel';
import { useDocumentTitle } from '../components/useDocumentTitle';

/** Only paths inside the app are followed after sign-in, never another site. */
function safeNext(next: string | null): string {
  return next && next.startsWith('/') && !next.startsWith('//') ? next : '/';
}

export default function SignInPage() {
  useDocumentTitle('Sign in');
  const [params] = useSearchParams();
  const navigate = useNavigate();
  const login = useLogin();
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');

  const submit = (e: FormEvent) => {
    e.preventDefault();
    login.mutate({ email, password }, { onSuccess: () => navigate(safeNext(params.get('next')), { replace: true }) });
  };

  return (
    <AuthFrame title="Sign in to Pleat">
      <form onSubmit={submit} className="space-y-4" noValidate={false}>
        <Field id="email" label="E-mail">
          <input id="email" type="email" autoComplete="username" required className={inputClass} value={email} onChange={(e) => setEmail(e.target.value)} />
        </Field>
        <Field id="password" label="Password">
          <input
            id="password"
            type="password"
            autoComplete="current-password"
            required
            className={inputClass}
            value={password}
            onChange={(e) => setPassword(e.target.value)}
          />
        </Field>
        <FormError error={login.error ? errorMessage(login.error) : null} />
        <button type="submit" className={`${buttonClass.primary} w-full`} disabled={login.isPending}>
          {login.isPending ? 'Signing in…' : 'Sign in'}
        </button>
        <p className="text-xs text-ink-600">New here? Ask a project lead or an admin for an invitation; the e-mail has a link to set your password.</p>
      </form>
    </AuthFrame>
  );
}
