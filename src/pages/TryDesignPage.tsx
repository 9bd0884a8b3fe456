import { useId, useRef, useState, type DragEvent } from 'react';
import { useSearchParams } from 'react-router-dom';
import { errorMessage } from '../api/client';
import { useAnalyze, useMe, useProjects } from '../api/hooks';
import { atLeast, can } from '../api/roles';
import type { Diagnostic } from '../../shared/types';
import { FormError } from '../components/AuthFrame';
import { PlanActions } from '../components/PlanActions';
import { DesignReportView } from '../components/DesignReportView';
import { DiagnosticsList } from '../components/DiagnosticsList';
import { Forbidden } from '../components/Forbidden';
import { PageHeader, Panel, buttonClass, inputClass } from '../components/Panel';
import { SourceView } from '../components/SourceView';
import { StatusBadge } from '../components/StatusBadge';
import { EmptyState, Loading } from '../components/States';
import { useDocumentTitle } from '../components/useDocumentTitle';

/** The server's own limit for a design file (the format's limit). */
const MAX_BYTES = 16 * 1024 * 1024;

export default function TryDesignPage() {
  useDocumentTitle('Try a design');
  const me = useMe();
  if (!can.tryDesign(me.data)) return <Forbidden what="Trying designs is for engineers and leads." />;
  return <TryDesign />;
}

function TryDesign() {
  const [params, setParams] = useSearchParams();
  const projects = useProjects();
  const me = useMe();
  const analyze = useAnalyze();
  const [file, setFile] = useState<{ name: string; text: string; blob: Blob } | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  const [dragging, setDragging] = useState(false);
  const [focus, setFocus] = useState<{ line: number; n: number } | null>(null);
  const inputRef = useRef<HTMLInputElement>(null);
  const inputId = useId();
  const sourceRef = useRef<HTMLDivElement>(null);

  const eligible = (projects.data?.projects ?? []).filter((p) => me.data?.user.isAdmin || atLeast(p.role, 'engineer'));
  // Only a project where the person may try designs (the server would refuse the others).
  const requested = params.get('project') ?? '';
  const project = eligible.some((p) => p.slug === requested) ? requested : '';

  const run = async (f: File, projectSlug: string) => {
    setProblem(null);
    setFocus(null);
    if (f.size > MAX_BYTES) {
      setProblem(`${f.name} is ${(f.size / 1048576).toFixed(1)} MiB; this server takes design files of up to 16 MiB.`);
      return;
    }
    const text = await f.text();
    setFile({ name: f.name, text, blob: f });
    analyze.mutate({ file: f, fileName: f.name, project: projectSlug || null });
  };

  const onDrop = (e: DragEvent) => {
    e.preventDefault();
    setDragging(false);
    const f = e.dataTransfer.files?.[0];
    if (f) void run(f, project);
  };

  const setProject = (slug: string) => {
    const next = new URLSearchParams(params);
    if (slug) next.set('project', slug);
    else next.delete('project');
    setParams(next, { replace: true });
    // The same file again, under the other project's rules.
    if (file) analyze.mutate({ file: file.blob, fileName: file.name, project: slug || null });
  };

  const showLine = (d: Diagnostic) => {
    if (d.line === null) return;
    setFocus((f) => ({ line: d.line!, n: (f?.n ?? 0) + 1 }));
    sourceRef.current?.scrollIntoView({ behavior: 'smooth', block: 'start' });
  };

  const result = analyze.data;
  const diagnostics = result?.design.diagnostics ?? [];

  return (
    <div>
      <PageHeader title="Try a design">
        Check a design file before you commit it: the same analysis CI runs, shown the same way. Nothing is stored.
      </PageHeader>

      <div className="grid gap-4 lg:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
        <div
          onDragOver={(e) => {
            e.preventDefault();
            setDragging(true);
          }}
          onDragLeave={() => setDragging(false)}
          onDrop={onDrop}
          className={`flex items-center justify-center gap-x-4 gap-y-3 rounded-xl border-2 border-dashed px-6 text-center ${file ? 'flex-row flex-wrap py-4' : 'flex-col py-8'} ${
            dragging ? 'border-ember-500 bg-ember-50' : 'border-ink-300 bg-white'
          }`}
          data-testid="drop-zone"
        >
          <svg width="44" height="30" viewBox="0 0 44 30" aria-hidden="true" className="text-ember-500">
            <path d="M4 24 12 6 20 24 28 6 36 24" fill="none" stroke="currentColor" strokeWidth="3" strokeLinejoin="round" strokeLinecap="round" />
            <path d="M22 2v10M18 8l4 4 4-4" stroke="#353b62" strokeWidth="2" fill="none" strokeLinecap="round" />
          </svg>
          <p className="text-ink-800">
            Drop a <code className="rounded bg-ink-100 px-1">.fold.yaml</code> file here, or
          </p>
          <input
            ref={inputRef}
            id={inputId}
            type="file"
            accept=".yaml,.yml,application/yaml,text/yaml"
            aria-label="Design file"
            // The visible button below opens it; one stop in the tab order is enough.
            tabIndex={-1}
            className="sr-only"
            onChange={(e) => {
              const f = e.target.files?.[0];
              if (f) void run(f, project);
              e.target.value = ''; // choosing the same file again analyses it again
            }}
          />
          <button type="button" className={buttonClass.accent} onClick={() => inputRef.current?.click()}>
            Choose a design file
          </button>
          {file && <p className="w-full text-sm text-ink-600">Last file: {file.name}</p>}
        </div>
        <div className="rounded-xl border border-ink-200 bg-white p-5">
          <label htmlFor="try-project" className="block text-sm font-medium text-ink-800">
            Apply the team rules of
          </label>
          <select id="try-project" className={`${inputClass} mt-1`} value={project} onChange={(e) => setProject(e.target.value)}>
            <option value="">no project (default rules only)</option>
            {eligible.map((p) => (
              <option key={p.slug} value={p.slug}>
                {p.name}
              </option>
            ))}
          </select>
          <p className="mt-2 text-xs text-ink-600">
            The repository's own <code>pleat.config.yaml</code> is not read here; CI applies it on top of the team rules.
          </p>
        </div>
      </div>

      <div className="mt-4">
        <FormError error={problem ?? (analyze.error ? errorMessage(analyze.error) : null)} />
      </div>

      <div className="mt-6">
        {analyze.isPending ? (
          <Loading label={`Analysing ${file?.name ?? 'the design'}…`} />
        ) : result && file ? (
          <div className="space-y-6" data-testid="try-result">
            <div className="flex flex-wrap items-center gap-3">
              <StatusBadge status={result.design.status} size="lg" />
              <span className="text-ink-700">
                {result.design.status === 'pass'
                  ? 'Every rule holds.'
                  : result.design.status === 'fail'
                    ? `${result.design.violations.length} rule${result.design.violations.length === 1 ? '' : 's'} broken.`
                    : 'The file is not a valid design; the findings below point at its lines.'}
              </span>
            </div>
            <Panel
              id="try-plan"
              title="Plan this design"
              subtitle={project ? `The planner finds folding sets for it; the job is kept with ${eligible.find((p) => p.slug === project)?.name ?? project}.` : 'Plans are kept with a project: choose one above to plan this file.'}
            >
              {project ? (
                <PlanActions slug={project} design={{ text: file.text, file: file.name }} factor={result.design.factor ?? null} />
              ) : (
                <p className="text-sm text-ink-600">Choose the project whose team rules apply; its engineers and leads can then follow the plan.</p>
              )}
            </Panel>
            {diagnostics.some((d) => d.line !== null) || result.design.status === 'error' ? (
              <div ref={sourceRef} className="scroll-mt-20">
                <Panel
                  title={file.name}
                  subtitle={`${diagnostics.length} finding${diagnostics.length === 1 ? '' : 's'}, marked on their lines; choose a position in the list to go to it`}
                >
                  <div className="grid gap-4 2xl:grid-cols-2">
                    <SourceView text={file.text} diagnostics={diagnostics} focus={focus} />
                    <DiagnosticsList diagnostics={diagnostics} file={file.name} onSelect={showLine} />
                  </div>
                </Panel>
              </div>
            ) : null}
            {result.design.status !== 'error' && <DesignReportView design={result.design} rules={result.rules} onSelectDiagnostic={showLine} />}
          </div>
        ) : (
          !analyze.isError && (
            <EmptyState title="No design analysed yet">
              The results appear here: verdict, edges with folded delays, schedule, registers and the iteration bound.
            </EmptyState>
          )
        )}
      </div>
    </div>
  );
}
