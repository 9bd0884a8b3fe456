import type { IterationBound } from '../../shared/types';
import { num } from './format';

/** The iteration bound as an exact fraction, its critical loop drawn as a chain, and what it means for N. */
export function IterationBoundCard({
  bound,
  factor,
  factorLowerBound,
  samplePeriodNs,
  sampleRateMHz,
  datapath = true,
}: {
  bound: IterationBound | null | undefined;
  factor: number;
  factorLowerBound?: number;
  samplePeriodNs?: number | null;
  sampleRateMHz?: number | null;
  /** False when no retiming makes the folded datapath buildable: it then has no sample rate. */
  datapath?: boolean;
}) {
  return (
    <div className="space-y-4">
      {bound ? (
        <>
          <div className="flex flex-wrap items-baseline gap-x-6 gap-y-2">
            <div>
              <div className="text-xs font-medium uppercase tracking-wider text-ink-500">Iteration bound T∞</div>
              <div className="mt-1 flex items-baseline gap-2 text-3xl font-bold text-ink-950" data-testid="iteration-bound">
                {bound.denominator === 1 ? (
                  bound.numerator
                ) : (
                  <span aria-label={`${bound.numerator} over ${bound.denominator}`} className="inline-flex flex-col items-center text-xl leading-none">
                    <span>{bound.numerator}</span>
                    <span aria-hidden="true" className="my-0.5 h-0.5 w-full bg-ink-900" />
                    <span>{bound.denominator}</span>
                  </span>
                )}
                {bound.denominator !== 1 && <span className="text-base font-medium text-ink-600">≈ {num(bound.value)}</span>}
                <span className="text-sm font-medium text-ink-600">time units per iteration</span>
              </div>
            </div>
          </div>
          <div>
            <div className="mb-2 text-sm font-medium text-ink-700">Critical loop ({bound.loop.length} node{bound.loop.length === 1 ? '' : 's'})</div>
            <ol className="flex flex-wrap items-center gap-1.5" aria-label="Critical loop, in order along its edges">
              {bound.loop.map((n, i) => (
                <li key={`${n}-${i}`} className="flex items-center gap-1.5">
                  <span className="rounded-md border border-ink-300 bg-ink-50 px-2 py-0.5 text-sm font-medium">{n}</span>
                  <span aria-hidden="true" className="text-ember-600">
                    {i === bound.loop.length - 1 ? '↺' : '→'}
                  </span>
                </li>
              ))}
            </ol>
            <p className="mt-1 text-xs text-ink-600">The loop closes from {bound.loop[bound.loop.length - 1]} back to {bound.loop[0]}.</p>
          </div>
        </>
      ) : (
        <p className="text-sm text-ink-700">The data-flow graph has no loop, so nothing bounds the iteration period from below: any sample rate can be reached by pipelining.</p>
      )}
      <dl className="grid grid-cols-2 gap-3 text-sm sm:grid-cols-3">
        <div>
          <dt className="text-ink-600">Folding factor N</dt>
          <dd className="font-bold">{factor}</dd>
        </div>
        {factorLowerBound !== undefined && (
          <div>
            <dt className="text-ink-600">Smallest N the loops allow</dt>
            <dd className={`font-bold ${factor < factorLowerBound ? 'text-fail-700' : ''}`}>
              {factorLowerBound}
              {factor < factorLowerBound && <span className="ml-1 text-xs font-medium">(N is below it)</span>}
            </dd>
          </div>
        )}
        {samplePeriodNs != null && !datapath && (
          <div>
            <dt className="text-ink-600">Sample period · rate</dt>
            <dd className="font-bold" data-testid="sample-rate">
              none
              <span className="block text-xs font-medium text-ink-600">no folded datapath exists as planned, so no clock reaches a rate</span>
            </dd>
          </div>
        )}
        {samplePeriodNs != null && datapath && (
          <div>
            <dt className="text-ink-600">Sample period · rate</dt>
            <dd className="font-bold" data-testid="sample-rate">
              {num(samplePeriodNs)} ns · {num(sampleRateMHz ?? 1000 / samplePeriodNs)} MHz
            </dd>
          </div>
        )}
      </dl>
    </div>
  );
}
