// Number and date formatting shared by the pages, so every page says the same thing the same way.

export function pct(x: number | null | undefined, digits = 1): string {
  if (x === null || x === undefined || Number.isNaN(x)) return '—';
  return `${(x * 100).toFixed(digits).replace(/\.0+$/, '')}%`;
}

export function num(x: number | null | undefined, digits = 3): string {
  if (x === null || x === undefined || Number.isNaN(x)) return '—';
  if (Number.isInteger(x)) return x.toLocaleString('en-US');
  return Number(x.toFixed(digits)).toLocaleString('en-US', { maximumFractionDigits: digits });
}

export function shortCommit(c: string | null | undefined): string {
  return c ? c.slice(0, 8) : '—';
}

const dateFmt = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short' });
const rel = new Intl.RelativeTimeFormat('en', { numeric: 'auto' });

export function dateTime(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : dateFmt.format(d);
}

export function ago(iso: string | null | undefined, now = Date.now()): string {
  if (!iso) return '—';
  const t = new Date(iso).getTime();
  if (Number.isNaN(t)) return iso;
  const s = Math.round((t - now) / 1000);
  const abs = Math.abs(s);
  if (abs < 60) return rel.format(s, 'second');
  if (abs < 3600) return rel.format(Math.round(s / 60), 'minute');
  if (abs < 86400) return rel.format(Math.round(s / 3600), 'hour');
  if (abs < 86400 * 30) return rel.format(Math.round(s / 86400), 'day');
  return dateTime(iso);
}
