import type { Status } from '../../shared/types';

/**
 * A small trend line without a chart library, so the branches page stays light. Each point's
 * status is drawn with the same shapes as the badges (circle pass, diamond fail, square invalid).
 */
export function Sparkline({
  points,
  label,
  width = 120,
  height = 30,
  format = (v: number) => String(v),
}: {
  points: { value: number | null; status?: Status }[];
  label: string;
  width?: number;
  height?: number;
  format?: (v: number) => string;
}) {
  const values = points.map((p) => p.value).filter((v): v is number => v !== null);
  if (points.length === 0 || values.length === 0) return <span className="text-xs text-ink-500">no trend yet</span>;
  const min = Math.min(...values);
  const max = Math.max(...values);
  const pad = 5;
  const span = max - min || 1;
  const x = (i: number) => (points.length === 1 ? width / 2 : pad + (i * (width - 2 * pad)) / (points.length - 1));
  const y = (v: number) => (max === min ? height / 2 : height - pad - ((v - min) * (height - 2 * pad)) / span);
  const path = points
    .map((p, i) => (p.value === null ? null : `${x(i).toFixed(1)},${y(p.value).toFixed(1)}`))
    .filter(Boolean)
    .join(' ');
  const first = values[0];
  const last = values[values.length - 1];
  const desc = `${label}: ${values.length} run${values.length === 1 ? '' : 's'}, from ${format(first)} to ${format(last)}`;
  return (
    <svg width={width} height={height} role="img" aria-label={desc} className="overflow-visible">
      <title>{desc}</title>
      <polyline points={path} fill="none" stroke="#8b91b7" strokeWidth={1.5} strokeLinejoin="round" />
      {points.map((p, i) => {
        if (p.value === null) return null;
        const cx = x(i);
        const cy = y(p.value);
        const color = p.status === 'fail' ? '#b4232c' : p.status === 'error' ? '#8d2f99' : '#1d7a5c';
        if (p.status === 'fail') return <path key={i} d={`M${cx} ${cy - 3.6}L${cx + 3.6} ${cy}L${cx} ${cy + 3.6}L${cx - 3.6} ${cy}Z`} fill={color} />;
        if (p.status === 'error') return <rect key={i} x={cx - 3} y={cy - 3} width={6} height={6} fill={color} />;
        return <circle key={i} cx={cx} cy={cy} r={2.6} fill={color} />;
      })}
    </svg>
  );
}
