import { useId, useState } from 'react';
import { useNavigate } from 'react-router-dom';
import type { StartJob } from '../api/client';
import { errorMessage } from '../api/client';
import { useStartJob } from '../api/hooks';
import type { JobObjective } from '../api/types';
import { to } from '../links';
import { FormError } from './AuthFrame';
import { buttonClass, inputClass } from './Panel';

const OBJECTIVES: { value: JobObjective; label: string }[] = [
  { value: 'registers', label: 'fewest registers, then multiplexer inputs, then latency' },
  { value: 'muxes', label: 'fewest multiplexer inputs, then registers, then latency' },
  { value: 'latency', label: 'least latency, then registers, then multiplexer inputs' },
];

/**
 * Starts a plan of this design (folding sets found by the planner) or a sweep over folding
 * factors, as a job of the project, and opens the job's page. The worker processes do the work;
 * this only asks for it.
 */
export function PlanActions({ slug, design, factor }: { slug: string; design: StartJob['design']; factor: number | null }) {
  const start = useStartJob(slug);
  const navigate = useNavigate();
  const [objective, setObjective] = useState<JobObjective>('registers');
  const [seconds, setSeconds] = useState(30);
  const [from, setFrom] = useState(2);
  const [upTo, setUpTo] = useState(Math.max(4, Math.min(32, (factor ?? 4) * 2)));
  const ids = { objective: useId(), seconds: useId(), from: useId(), upTo: useId() };
  const sweepBad = !(from >= 1 && upTo >= from && upTo - from < 64);

  const go = (body: StartJob) =>
    start.mutate(body, { onSuccess: ({ job }) => navigate(to.job(slug, job.id)) });

  return (
    <div className="space-y-3" data-testid="plan-actions">
      <div className="grid gap-3 sm:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <div>
          <label htmlFor={ids.objective} className="block text-sm font-medium text-ink-800">Aim</label>
          <select id={ids.objective} className={`${inputClass} mt-1`} value={objective} onChange={(e) => setObjective(e.target.value as JobObjective)}>
            {OBJECTIVES.map((o) => <option key={o.value} value={o.value}>{o.label}</option>)}
          </select>
        </div>
        <div>
          <label htmlFor={ids.seconds} className="block text-sm font-medium text-ink-800">Time limit (s)</label>
          <input id={ids.seconds} type="number" min={1} max={600} className={`${inputClass} mt-1`} value={seconds} onChange={(e) => setSeconds(Number(e.target.value))} />
        </div>
      </div>
      <div className="flex flex-wrap items-end gap-3">
        <button
          type="button"
          className={buttonClass.accent}
          disabled={start.isPending || !(seconds >= 1 && seconds <= 600)}
          onClick={() => go({ kind: 'plan', design, objective, timeLimitSeconds: seconds })}
        >
          Plan this design
        </button>
        <span className="text-sm text-ink-500">or</span>
        <div className="flex items-end gap-2">
          <div>
            <label htmlFor={ids.from} className="block text-xs font-medium text-ink-700">N from</label>
            <input id={ids.from} type="number" min={1} className={`${inputClass} mt-1 w-20`} value={from} onChange={(e) => setFrom(Number(e.target.value))} />
          </div>
          <div>
            <label htmlFor={ids.upTo} className="block text-xs font-medium text-ink-700">to</label>
            <input id={ids.upTo} type="number" min={1} className={`${inputClass} mt-1 w-20`} value={upTo} onChange={(e) => setUpTo(Number(e.target.value))} />
          </div>
          <button
            type="button"
            className={buttonClass.secondary}
            disabled={start.isPending || sweepBad || !(seconds >= 1 && seconds <= 600)}
            onClick={() => go({ kind: 'sweep', design, objective, timeLimitSeconds: seconds, factors: Array.from({ length: upTo - from + 1 }, (_, i) => from + i) })}
          >
            Sweep N
          </button>
        </div>
      </div>
      <p className="text-xs text-ink-600">
        A sweep shares the time limit among its factors. Plans run on the server's workers; the job page shows their progress.
      </p>
      <FormError error={start.error ? errorMessage(start.error) : sweepBad ? 'Sweep from a smaller N to a larger one, at most 64 factors.' : null} />
    </div>
  );
}
