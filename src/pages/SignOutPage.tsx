import { useEffect, useRef } from 'react';
import { Link } from 'react-router-dom';
import { errorMessage } from '../api/client';
import { useLogout } from '../api/hooks';
import { AuthFrame, FormError } from '../components/AuthFrame';
import { buttonClass } from '../components/Panel';
import { Loading } from '../components/States';
import { to } from '../links';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function SignOutPage() {
  useDocumentTitle('Signed out');
  const logout = useLogout();
  const started = useRef(false);
  useEffect(() => {
    // Once, even when React runs effects twice in development.
    if (started.current) return;
    started.current = true;
    logout.mutate();
  }, [logout]);
  return (
    <AuthFrame title={logout.isSuccess ? 'You are signed out' : 'Signing out'}>
      {logout.isPending || logout.isIdle ? (
        <Loading label="Signing out…" />
      ) : logout.isError ? (
        <div className="space-y-4">
          <FormError error={`Signing out failed: ${errorMessage(logout.error)}`} />
          <button type="button" className={buttonClass.primary} onClick={() => logout.mutate()}>
            Try again
          </button>
        </div>
      ) : (
        <div className="space-y-4">
          <p className="text-ink-700">Your session has ended on this browser.</p>
          <Link to={to.signIn()} className={buttonClass.primary}>
            Sign in again
          </Link>
        </div>
      )}
    </AuthFrame>
  );
}
