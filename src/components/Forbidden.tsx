import { PageHeader } from './Panel';
import { EmptyState } from './States';

/** What a page says to someone whose role does not include it (the server refuses it anyway). */
export function Forbidden({ what }: { what: string }) {
  return (
    <div>
      <PageHeader title="Not for your role" />
      <EmptyState title="Your role does not include this page">{what}</EmptyState>
    </div>
  );
}
