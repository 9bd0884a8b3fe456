import { useState, type FormEvent } from 'react';
import { errorMessage } from '../api/client';
import { useUpdateProject } from '../api/hooks';
import type { Project } from '../api/types';
import { FormError } from './AuthFrame';
import { Panel, buttonClass, inputClass } from './Panel';

/**
 * How long runs of branches other than the base are kept (docs/server.md, retention). The base
 * branch's history is never pruned: it is what every branch is compared with.
 */
export function RetentionPanel({ project, mayEdit }: { project: Project; mayEdit: boolean }) {
  const update = useUpdateProject(project.slug);
  const [days, setDays] = useState(project.branchRunDays === null ? '' : String(project.branchRunDays));
  const [saved, setSaved] = useState(false);
  // Kept with the change in the rules history, as every other rule change (migration 005).
  const [reason, setReason] = useState('');
  const text = days.trim();
  const value = text === '' ? null : Number(text);
  const invalid = value !== null && !(Number.isInteger(value) && value >= 1 && value <= 36500);
  const now = project.branchRunDays === null ? 'kept for as long as the project' : `kept ${project.branchRunDays} days`;

  async function submit(e: FormEvent) {
    e.preventDefault();
    setSaved(false);
    if (invalid) return;
    await update.mutateAsync({ branchRunDays: value, reason: reason.trim() || undefined });
    setReason('');
    setSaved(true);
  }

  return (
    <Panel id="retention" title="Keeping runs" subtitle={`Runs of branches other than ${project.baseBranch}: ${now}. The base branch keeps every run.`}>
      {mayEdit ? (
        <form onSubmit={submit} className="flex flex-wrap items-end gap-3" noValidate>
          <label className="grid gap-1 text-sm font-medium">
            Keep runs of other branches for (days)
            <input
              className={inputClass}
              inputMode="numeric"
              value={days}
              onChange={(e) => { setDays(e.target.value); setSaved(false); }}
              placeholder="empty: keep them all"
              aria-invalid={invalid}
              aria-describedby="retention-help"
            />
          </label>
          <label className="grid min-w-[16rem] flex-1 gap-1 text-sm font-medium">
            Reason (kept in the history)
            <input
              className={inputClass}
              maxLength={500}
              placeholder="e.g. the disk of the server is filling up"
              value={reason}
              onChange={(e) => { setReason(e.target.value); setSaved(false); }}
            />
          </label>
          <button type="submit" className={buttonClass.accent} disabled={invalid || update.isPending}>
            {update.isPending ? 'Saving…' : 'Save'}
          </button>
          <p id="retention-help" className="w-full text-xs text-ink-600">
            {invalid ? 'A whole number of days from 1 to 36,500, or empty to keep every run.' : 'Older runs are deleted in batches by the server\u2019s clean-up, without holding up the history pages.'}
          </p>
          {saved && <p role="status" className="text-sm font-medium text-pass-700">Saved</p>}
          <FormError error={update.error ? errorMessage(update.error) : null} />
        </form>
      ) : null}
    </Panel>
  );
}
