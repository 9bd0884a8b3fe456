import { Link } from 'react-router-dom';
import { EmptyState } from '../components/States';
import { PageHeader, buttonClass } from '../components/Panel';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function NotFoundPage() {
  useDocumentTitle('Not found');
  return (
    <div>
      <PageHeader title="Not found" />
      <EmptyState title="There is no page at this address" action={<Link to="/" className={buttonClass.primary}>Go to your projects</Link>}>
      The link may be mistyped, or the page may have moved.
      </EmptyState>
    </div>
  );
}
