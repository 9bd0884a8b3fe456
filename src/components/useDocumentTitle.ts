import { useEffect } from 'react';

/** The browser tab and screen readers name the page: "<what> · Pleat". */
export function useDocumentTitle(title: string | null | undefined) {
  useEffect(() => {
    document.title = title ? `${title} · Pleat` : 'Pleat';
  }, [title]);
}
