import { useRef, useState, type ReactNode } from 'react';
import type { Diagnostic, DesignReport, EffectiveRules } from '../api/types';
import { AllocationTable } from './AllocationTable';
import { ControlTables } from './ControlTables';
import { DiagnosticsList } from './DiagnosticsList';
import { EdgeTable } from './EdgeTable';
import { IterationBoundCard } from './IterationBoundCard';
import { LifetimeChart } from './LifetimeChart';
import { Panel, Stat } from './Panel';
import { RetimingCard } from './RetimingCard';
import { ScheduleGrid } from './ScheduleGrid';
import { SourceView } from './SourceView';
import { StatusBadge } from './StatusBadge';
import { UtilizationBars } from './UtilizationBars';
import { ViolationsList } from './ViolationsList';
import { num, pct } from './format';

/**
 * Everything Pleat computed for one design. The run page and the try-a-design page both render
 * this, so a design reads the same whether it came from CI or from a file dropped in the browser.
 */
export function DesignReportView({
  design,
  rules,
  changes,
  onSelectDiagnostic,
  source,
  hostLink,
}: {
  design: DesignReport;
  rules?: EffectiveRules;
  /** The comparison against the base branch, rendered by the caller (only the run page has one). */
  changes?: ReactNode;
  /** Goes to a line of the file the caller shows (the try page); without it, `source` is shown here. */
  onSelectDiagnostic?: (d: Diagnostic) => void;
  /** The design file's text when the report carries it (a run uploaded with its designs' text). */
  source?: string;
  /** A line of this design's file on the git host at the run's commit, when the project is connected. */
  hostLink?: (line: number | null | undefined) => string | null;
}) {
  // With the text at hand, findings and broken rules point into a file view of this design.
  const [focus, setFocus] = useState<{ line: number; n: number } | null>(null);
  const fileRef = useRef<HTMLDivElement>(null);
  const ownFile = source !== undefined && !onSelectDiagnostic;
  const goTo = (line: number | null | undefined) => {
    if (line == null) return;
    if (onSelectDiagnostic) return onSelectDiagnostic({ severity: 'error', code: '', message: '', line, column: null });
    setFocus((f) => ({ line, n: (f?.n ?? 0) + 1 }));
    fileRef.current?.scrollIntoView({ behavior: 'smooth', block: 'start' });
  };
  const selectLine = onSelectDiagnostic ?? (ownFile ? (d: Diagnostic) => goTo(d.line) : undefined);
  const marks: Diagnostic[] = [
    ...design.diagnostics,
    ...design.violations.filter((v) => v.line != null).map((v) => ({ severity: 'error' as const, code: `rule-${v.rule}`, message: v.message, line: v.line ?? null, column: v.column ?? null })),
  ];
  const valid = design.status !== 'error' && design.factor != null;
  const negatives = design.edges?.filter((e) => e.foldedDelay !== null && e.foldedDelay < 0).length ?? 0;
  // With negative folded delays that no retiming removes, the folded hardware cannot be built as
  // planned: the report's "retimed" delays are then only the design's own, and its sample rate
  // is that of hardware that does not exist. Neither is shown as if it did.
  const datapath = design.retiming ? design.retiming.feasible : true;
  const sections: [string, string][] = valid
    ? [
        ['rules', 'Rules'],
        ...(design.diagnostics.length ? ([['findings', 'Findings']] as [string, string][]) : []),
        ...(changes ? ([['changes', 'Changes']] as [string, string][]) : []),
        ['edges', 'Edges'],
        ['schedule', 'Schedule'],
        ['utilization', 'Utilization'],
        ['registers', 'Registers'],
        ['control', 'Control'],
        ['bound', 'Iteration bound'],
        ...(ownFile ? ([['file', 'File']] as [string, string][]) : []),
      ]
    : [];

  return (
    <article aria-label={`Design ${design.name ?? design.file}`} className="space-y-5" data-testid="design-report">
      <div className="flex flex-wrap items-center gap-3">
        <h2 className="text-xl font-bold tracking-tight">{design.name ?? <span className="text-ink-500">unnamed design</span>}</h2>
        <StatusBadge status={design.status} />
        <span className="text-sm text-ink-600">{design.file}</span>
      </div>

      {!valid ? (
        <Panel id="findings" title="Why this design could not be analysed" subtitle="Fix these findings in the design file; positions are line:column.">
          <DiagnosticsList diagnostics={design.diagnostics} file={design.file} onSelect={selectLine} />
        </Panel>
      ) : (
        <>
          <dl className="grid grid-cols-2 gap-3 md:grid-cols-3 xl:grid-cols-6">
            <Stat label="Folding factor" value={design.factor} hint={design.factorLowerBound != null ? `loops allow ≥ ${design.factorLowerBound}` : undefined} />
            <Stat label="Utilization" value={pct(design.utilization?.overall)} hint={`${Object.keys(design.utilization?.units ?? {}).length} units`} />
            <Stat label="Registers" value={design.registers ? design.registers.minimum : '—'} hint={design.registers ? `minimum; ${design.registers.perEdge} unshared` : 'no feasible datapath'} />
            <Stat
              label="Negative D_F"
              value={negatives}
              tone={negatives > 0 && !design.retiming?.feasible ? 'bad' : undefined}
              hint={negatives === 0 ? 'none' : design.retiming?.feasible ? 'fixed by retiming' : 'retiming impossible'}
            />
            <Stat
              label="Iteration bound"
              value={design.iterationBound ? (design.iterationBound.denominator === 1 ? design.iterationBound.numerator : `${design.iterationBound.numerator}/${design.iterationBound.denominator}`) : '—'}
              hint={design.iterationBound ? 'time units' : 'no loops'}
            />
            <Stat
              label="Sample rate"
              value={datapath && design.sampleRateMHz != null ? `${num(design.sampleRateMHz)} MHz` : '—'}
              hint={!datapath ? 'no feasible datapath' : design.samplePeriodNs != null ? `${num(design.samplePeriodNs)} ns period` : 'no clock_ns given'}
            />
          </dl>

          <nav aria-label="Sections of this design" className="z-20 -mx-1 flex flex-wrap gap-1 rounded-lg bg-paper/95 px-1 py-1.5 backdrop-blur sm:sticky sm:top-14">
            {sections.map(([id, label]) => (
              <a key={id} href={`#${id}`} className="rounded-md px-2.5 py-1 text-sm font-medium text-ink-700 hover:bg-ink-100 hover:text-ink-950">
                {label}
              </a>
            ))}
          </nav>

          <div className="grid gap-5 xl:grid-cols-2">
            <Panel id="rules" title="Rules" subtitle="Broken rules and where each rule came from">
              <ViolationsList
                violations={design.violations}
                file={design.file}
                onSelect={selectLine || ownFile ? (v) => goTo(v.line) : undefined}
                hostHref={hostLink ? (v) => hostLink(v.line) : undefined}
              />
              {rules && <RulesInForce rules={rules} />}
            </Panel>
            <Panel id="retiming" title="Retiming" subtitle="Removing negative folded delays by moving delays around loops">
              {design.retiming && <RetimingCard retiming={design.retiming} />}
            </Panel>
          </div>

          {design.diagnostics.length > 0 && (
            <Panel id="findings" title="Findings" subtitle="Warnings about the design file">
              <DiagnosticsList diagnostics={design.diagnostics} file={design.file} onSelect={selectLine} />
            </Panel>
          )}

          {changes && (
            <Panel id="changes" title="Changes against the base branch">
              {changes}
            </Panel>
          )}

          <Panel id="edges" title="Edges" subtitle={datapath ? 'Folded delay D_F = N·w − P(U) + slot(V) − slot(U), before and after retiming' : 'Folded delay D_F = N·w − P(U) + slot(V) − slot(U); no retiming exists for this plan'}>
            <EdgeTable edges={design.edges ?? []} retiming={!design.retiming?.needed ? 'not-needed' : datapath ? 'retimed' : 'impossible'} />
          </Panel>

          <div className="grid gap-5 2xl:grid-cols-[3fr_2fr]">
            <Panel id="schedule" title="Schedule" subtitle={`Which node each unit runs in each of the ${design.factor} partitions`}>
              <ScheduleGrid schedule={design.schedule ?? []} factor={design.factor!} />
            </Panel>
            <Panel id="utilization" title="Utilization" subtitle="Share of each unit's partitions that do useful work">
              {design.utilization && <UtilizationBars utilization={design.utilization} rules={rules} />}
            </Panel>
          </div>

          <Panel
            id="registers"
            title="Registers"
            subtitle={
              design.registers
                ? `${design.registers.minimum} by lifetime analysis · ${design.registers.delayLines} as delay lines · ${design.registers.perEdge} one chain per edge`
                : 'No feasible folded datapath, so no registers to count'
            }
          >
            {design.lifetimes ? (
              <LifetimeChart lifetimes={design.lifetimes} registerMinimum={design.registers?.minimum} />
            ) : (
              <p className="text-sm text-ink-600">
                {design.registers
                  ? 'This report carries no lifetime chart (it was made by a Pleat version that did not write one).'
                  : 'No lifetime chart: the folded datapath cannot exist as planned.'}
              </p>
            )}
            <h3 className="mt-6 mb-2 text-sm font-bold text-ink-800">Register allocation</h3>
            {design.allocation ? (
              <AllocationTable allocation={design.allocation} />
            ) : (
              <p className="text-sm text-ink-600" data-testid="allocation-missing">{missingAllocation(design)}</p>
            )}
          </Panel>

          <Panel
            id="control"
            title="Control"
            subtitle={`Operand multiplexers, register loads and port timing of the folded datapath, over its ${design.factor} partitions`}
          >
            <ControlTables control={design.control} omitted={design.controlOmitted} />
          </Panel>

          <Panel id="bound" title="Iteration bound" subtitle="The slowest loop of the unfolded graph limits the sample rate">
            <IterationBoundCard
              bound={design.iterationBound}
              factor={design.factor!}
              factorLowerBound={design.factorLowerBound ?? undefined}
              samplePeriodNs={design.samplePeriodNs}
              sampleRateMHz={design.sampleRateMHz}
              datapath={datapath}
            />
          </Panel>
        </>
      )}

      {ownFile && (
        <div ref={fileRef} className="scroll-mt-20">
          <Panel id="file" title={design.file} subtitle="The design file as the run uploaded it; findings and broken rules are marked on their lines">
            <SourceView text={source!} diagnostics={marks} focus={focus} />
          </Panel>
        </div>
      )}
    </article>
  );
}

function RulesInForce({ rules }: { rules: EffectiveRules }) {
  const entries = Object.entries(rules) as [keyof EffectiveRules, { value: number | string; source: string }][];
  if (entries.length === 0) return null;
  return (
    <div className="mt-4">
      <div className="mb-1 text-xs font-medium uppercase tracking-wider text-ink-500">In force for this check</div>
      <ul className="flex flex-wrap gap-2 text-xs">
        {entries.map(([name, r]) => (
          <li key={name} className="rounded border border-ink-200 bg-ink-50 px-2 py-1">
            <span className="font-medium">{name}</span> = {typeof r.value === 'number' && name.startsWith('min_') ? pct(r.value) : String(r.value)}{' '}
            <span className={r.source === 'team' ? 'text-ember-700' : 'text-ink-500'}>({r.source})</span>
          </li>
        ))}
      </ul>
    </div>
  );
}

/**
 * Why a design shows no allocation table: the report's reason; else, with registers counted (a
 * feasible datapath), a report of a version that did not write the table; else no datapath.
 */
function missingAllocation(design: DesignReport): string {
  if (design.registers) {
    return design.allocationOmitted
      ? `Left out of this report: ${design.allocationOmitted}.`
      : 'This report carries no allocation table (it was made by a Pleat version that did not write one).';
  }
  return design.allocationOmitted ?? 'No allocation: the folded datapath cannot exist as planned.';
}
