import type { EffectiveRules, Utilization } from '../../shared/types';
import { pct } from './format';

/**
 * Hardware utilization efficiency per unit as horizontal bars. The floors in force (from the
 * rules) are drawn as a tick, and a unit under its floor says so in words, not only in colour.
 */
export function UtilizationBars({ utilization, rules }: { utilization: Utilization; rules?: EffectiveRules }) {
  const unitFloor = rules?.min_unit_utilization?.value;
  const overallFloor = rules?.min_utilization?.value;
  const units = Object.entries(utilization.units);
  return (
    <div>
      <Bar label="Whole design" value={utilization.overall} floor={overallFloor} strong />
      <ul className="relative mt-3 max-h-[24rem] space-y-2 overflow-y-auto py-1 pr-1" aria-label="Utilization per unit" tabIndex={units.length > 14 ? 0 : undefined}>
        {units.map(([unit, value]) => (
          <li key={unit}>
            <Bar label={unit} value={value} floor={unitFloor} />
          </li>
        ))}
      </ul>
      {(unitFloor !== undefined || overallFloor !== undefined) && (
        <p className="mt-3 flex items-center gap-2 text-xs text-ink-600">
          <span aria-hidden="true" className="inline-block h-3 w-0.5 bg-ember-600" /> the floor set by the rules
          {overallFloor !== undefined && <> · design {pct(overallFloor, 0)}</>}
          {unitFloor !== undefined && <> · each unit {pct(unitFloor, 0)}</>}
        </p>
      )}
    </div>
  );
}

function Bar({ label, value, floor, strong }: { label: string; value: number; floor?: number; strong?: boolean }) {
  const below = floor !== undefined && value < floor;
  return (
    <div className="grid grid-cols-[8rem_1fr_5.5rem] items-center gap-3 text-sm" data-unit={label}>
      <span className={`truncate ${strong ? 'font-bold' : 'font-medium'}`} title={label}>
        {label}
      </span>
      <div
        className="relative h-4 rounded-sm bg-ink-100"
        role="meter"
        aria-label={`${label} utilization`}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={Math.round(value * 1000) / 10}
        aria-valuetext={`${pct(value)}${below ? `, below the floor of ${pct(floor)}` : ''}`}
      >
        <div className={`h-full rounded-sm ${below ? 'bg-fail-600' : strong ? 'bg-ink-800' : 'bg-ink-600'}`} style={{ width: `${Math.min(100, value * 100)}%` }} />
        {floor !== undefined && <div aria-hidden="true" className="absolute -top-1 -bottom-1 w-0.5 bg-ember-600" style={{ left: `${floor * 100}%` }} />}
      </div>
      <span className={`text-right ${below ? 'font-bold text-fail-700' : ''}`}>
        {below && (
          <svg width="10" height="10" viewBox="0 0 12 12" aria-hidden="true" className="mr-1 inline-block text-fail-600">
            <path d="M1 2H11L6 11Z" fill="currentColor" />
          </svg>
        )}
        {pct(value)}
        {below && <span className="sr-only"> (below the floor)</span>}
      </span>
    </div>
  );
}
