import { useState } from 'react';
import type { RetimingResult } from '../../shared/types';
import { StatusIcon } from './StatusBadge';

/** Whether retiming was needed, whether it worked, and when not, the loop that stops it and what would fix it. */
export function RetimingCard({ retiming }: { retiming: RetimingResult }) {
  // The list of moved nodes can run to thousands: built only when someone opens it.
  const [open, setOpen] = useState(false);
  const changed = Object.entries(retiming.values).filter(([, r]) => r !== 0);
  if (!retiming.needed)
    return (
      <p className="flex items-center gap-2 text-sm text-pass-700">
        <StatusIcon status="pass" /> No folded delay is negative: the plan works without retiming.
      </p>
    );
  if (retiming.applied === false)
    return (
      <p className="flex items-center gap-2 text-sm text-fail-700">
        <StatusIcon status="fail" /> Some folded delays are negative, and the rule negative_delays: fail forbids retiming: the plan is judged as written.
      </p>
    );
  if (retiming.feasible)
    return (
      <div className="space-y-2 text-sm">
        <p className="flex items-center gap-2 text-pass-700">
          <StatusIcon status="pass" /> Retiming removes every negative folded delay.
        </p>
        <p className="text-ink-700">
          {changed.length} node{changed.length === 1 ? '' : 's'} move{changed.length === 1 ? 's' : ''}; latency added:{' '}
          <strong>
            {retiming.latencyAdded} iteration{retiming.latencyAdded === 1 ? '' : 's'}
          </strong>
          .
        </p>
        {retiming.method && (
          <p className="text-xs text-ink-600">
            <span className="font-medium">Solution reported:</span> {retiming.method}
          </p>
        )}
        {changed.length > 0 && (
          <details className="text-ink-700" onToggle={(e) => setOpen((e.target as HTMLDetailsElement).open)}>
            <summary className="cursor-pointer font-medium">Retiming values r(node) ≠ 0</summary>
            {open && (
            <ul className="relative mt-2 flex max-h-48 flex-wrap gap-1.5 overflow-y-auto">
              {changed.map(([n, r]) => (
                <li key={n} className="rounded bg-ink-50 px-2 py-0.5">
                  {n}: <strong>{r > 0 ? `+${r}` : r}</strong>
                </li>
              ))}
            </ul>
            )}
          </details>
        )}
      </div>
    );
  const c = retiming.conflict;
  return (
    <div className="space-y-3 text-sm" data-testid="retiming-conflict">
      <p className="flex items-center gap-2 font-medium text-fail-700">
        <StatusIcon status="fail" /> No retiming can remove the negative folded delays.
      </p>
      <p className="text-ink-700">
        So no folded datapath exists as planned: there are no retimed delays, no register count and no sample rate to report.
      </p>
      {c && (
        <>
          <p className="text-ink-700">
            The loop below carries {c.loopDelays} delay{c.loopDelays === 1 ? '' : 's'} and {c.loopStages} pipeline stage{c.loopStages === 1 ? '' : 's'}
            {c.minFactor !== null ? <>; it needs a folding factor of at least <strong>{c.minFactor}</strong></> : ''}.
          </p>
          <ol className="space-y-1" aria-label="The loop that makes retiming impossible">
            {c.edges.map((e, i) => {
              const bad = c.conflictingEdges.some((x) => x.from === e.from && x.to === e.to);
              return (
                <li key={i} className={`flex flex-wrap items-center gap-2 rounded px-2 py-1 ${bad ? 'bg-fail-100' : 'bg-ink-50'}`}>
                  <span className="font-medium">
                    {e.from} → {e.to}
                  </span>
                  <span className="text-ink-600">
                    w={e.delays}, D_F={e.foldedDelay ?? 'tap'}
                    {e.viaBoundary ? ' (through the shared boundary)' : ''}
                  </span>
                  {bad && <span className="font-medium text-fail-700">conflicts</span>}
                </li>
              );
            })}
          </ol>
          {c.suggestions.length > 0 && (
            <div>
              <div className="font-medium text-ink-800">What would fix it</div>
              <ul className="mt-1 list-disc space-y-0.5 pl-5 text-ink-700">
                {c.suggestions.map((s, i) => (
                  <li key={i}>{s}</li>
                ))}
              </ul>
            </div>
          )}
        </>
      )}
    </div>
  );
}
