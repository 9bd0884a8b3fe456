import { useState, type FormEvent } from 'react';
import { Link } from 'react-router-dom';
import { ApiError, errorMessage } from '../api/client';
import { useBranches, useCreateProject, useDeleteProject, useMe, useProjects } from '../api/hooks';
import type { Project } from '../api/types';
import { StatusBadge } from '../components/StatusBadge';
import { ago } from '../components/format';
import { can, roleLabel } from '../api/roles';
import { FormError } from '../components/AuthFrame';
import { PageHeader, buttonClass, inputClass } from '../components/Panel';
import { EmptyState, QueryState } from '../components/States';
import { to } from '../links';
import { useDocumentTitle } from '../components/useDocumentTitle';

export default function ProjectsPage() {
  useDocumentTitle('Projects');
  const me = useMe();
  const projects = useProjects();
  return (
    <div>
      <PageHeader title="Projects" eyebrow={me.data ? `Signed in as ${me.data.user.name}` : undefined}>
        Each project keeps the CI runs of one repository, per branch.
      </PageHeader>
      <QueryState query={projects} loadingLabel="Loading your projects…">
        {({ projects: list }) =>
          list.length === 0 ? (
            <EmptyState title="You are not in any project yet">
              A project lead adds you to a project, or an admin creates one.
            </EmptyState>
          ) : (
            <ul className="grid gap-4 sm:grid-cols-2 xl:grid-cols-3 2xl:grid-cols-4" aria-label="Your projects">
              {list.map((p) => (
                <li key={p.slug}>
                  <ProjectCard project={p} />
                </li>
              ))}
            </ul>
          )
        }
      </QueryState>
      {can.createProject(me.data) && <NewProject />}
      {can.deleteProject(me.data) && projects.data && projects.data.projects.length > 0 && <DeleteProject projects={projects.data.projects} />}
    </div>
  );
}

function ProjectCard({ project: p }: { project: Project }) {
  // The base branch's latest verdict tells at a glance whether the project is healthy.
  const branches = useBranches(p.slug);
  const base = branches.data?.branches.find((b) => b.isBase);
  return (
    <Link
      to={to.project(p.slug)}
      className="group block h-full rounded-xl border border-ink-200 bg-white p-5 shadow-[0_1px_0_var(--color-ink-200)] hover:border-ember-500"
      data-project={p.slug}
    >
      <div className="flex items-start justify-between gap-3">
        <h2 className="text-lg font-bold text-ink-950 group-hover:text-ember-700">{p.name}</h2>
        {p.role && <span className="rounded-full bg-ink-100 px-2 py-0.5 text-xs font-medium text-ink-700">{roleLabel[p.role]}</span>}
      </div>
      <p className="mt-1 text-sm text-ink-600">{p.slug}</p>
      <div className="mt-4 flex flex-wrap items-center gap-2 text-sm text-ink-700">
        <span>
          Base branch <span className="font-medium">{p.baseBranch}</span>
        </span>
        {branches.isPending ? (
          <span className="text-ink-500">…</span>
        ) : base?.latest ? (
          <>
            <StatusBadge status={base.latest.verdict} size="sm" />
            <span className="text-xs text-ink-500">{ago(base.lastRunAt)}</span>
          </>
        ) : (
          <span className="text-ink-500">no run yet</span>
        )}
      </div>
      {branches.data && (
        <p className="mt-1 text-xs text-ink-600">
          {branches.data.branches.length} branch{branches.data.branches.length === 1 ? '' : 'es'} with runs
        </p>
      )}
    </Link>
  );
}

/**
 * What makes a slug, as the server checks it (server/resources/projects/routes.ts). The `pattern`
 * attribute is compiled with the `v` flag, where a bare `-` in a class is a syntax error and the
 * browser then skips the check altogether: the dash is escaped.
 */
const SLUG_INPUT_PATTERN = '[a-z0-9][a-z0-9\\-]{0,62}';
const SLUG_RULE = 'A slug is 1 to 63 lower-case letters, digits and dashes, starting with a letter or a digit, such as radar-frontend.';

function slugProblem(slug: string): string | null {
  if (slug === '') return null;
  if (new RegExp(`^(?:${SLUG_INPUT_PATTERN})$`, 'v').test(slug)) return null;
  const lower = slug.toLowerCase().replace(/[^a-z0-9-]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 63);
  return `${SLUG_RULE}${lower && lower !== slug ? ` Perhaps ${lower}?` : ''}`;
}

/** The server's answer in words a person can act on; its own text only when nothing better is known. */
function createError(e: unknown): string {
  if (e instanceof ApiError && e.status === 400 && /slug/i.test(e.message)) return SLUG_RULE;
  return errorMessage(e);
}

function NewProject() {
  const create = useCreateProject();
  const [name, setName] = useState('');
  const [slug, setSlug] = useState('');
  const [base, setBase] = useState('main');
  const problem = slugProblem(slug.trim());
  const submit = (e: FormEvent) => {
    e.preventDefault();
    create.mutate({ name: name.trim(), slug: slug.trim(), baseBranch: base.trim() || undefined }, { onSuccess: () => (setName(''), setSlug('')) });
  };
  return (
    <section aria-labelledby="new-project" className="mt-10 max-w-3xl rounded-xl border border-ink-200 bg-white p-5">
      <h2 id="new-project" className="font-bold">
        New project <span className="text-sm font-normal text-ink-600">(admins)</span>
      </h2>
      <form onSubmit={submit} className="mt-3 grid gap-3 sm:grid-cols-[2fr_1.5fr_1fr_auto] sm:items-start">
        <label className="text-sm font-medium text-ink-800">
          Name
          <input className={`${inputClass} mt-1`} required value={name} onChange={(e) => setName(e.target.value)} />
        </label>
        <div>
          <label className="text-sm font-medium text-ink-800">
            Slug
            <input
              className={`${inputClass} mt-1`}
              required
              pattern={SLUG_INPUT_PATTERN}
              title={SLUG_RULE}
              aria-invalid={problem !== null}
              aria-describedby="new-project-slug-note"
              value={slug}
              onChange={(e) => setSlug(e.target.value)}
            />
          </label>
          <p id="new-project-slug-note" className={`mt-1 text-xs ${problem ? 'text-fail-700' : 'text-ink-600'}`} data-testid="slug-note">
            {problem ?? 'In the project’s addresses: lower-case letters, digits and dashes.'}
          </p>
        </div>
        <label className="text-sm font-medium text-ink-800">
          Base branch
          <input className={`${inputClass} mt-1`} value={base} onChange={(e) => setBase(e.target.value)} />
        </label>
        <button type="submit" className={`${buttonClass.primary} sm:mt-6`} disabled={create.isPending}>
          Create
        </button>
      </form>
      <div className="mt-3">
        <FormError error={create.error ? createError(create.error) : null} />
        {create.isSuccess && <p role="status" className="text-sm text-pass-700">Project {create.data.project.name} created. Add its members from the project's Members tab.</p>}
      </div>
    </section>
  );
}

/** An admin deletes a project and all its runs by typing its slug: a deletion cannot be undone. */
function DeleteProject({ projects }: { projects: Project[] }) {
  const remove = useDeleteProject();
  const [typed, setTyped] = useState('');
  const [done, setDone] = useState<string | null>(null);
  const target = projects.find((p) => p.slug === typed.trim()) ?? null;
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!target) return;
    const slug = target.slug;
    remove.mutate({ slug, confirm: slug }, { onSuccess: () => (setDone(slug), setTyped('')) });
  };
  return (
    <section aria-labelledby="delete-project" className="mt-6 max-w-3xl rounded-xl border border-fail-100 bg-white p-5">
      <h2 id="delete-project" className="font-bold">
        Delete a project <span className="text-sm font-normal text-ink-600">(admins)</span>
      </h2>
      <p className="mt-1 text-sm text-ink-600">Deletes the project with every run, rule, token and plan it holds. Type its slug to confirm; this cannot be undone.</p>
      <form onSubmit={submit} className="mt-4 flex flex-wrap items-end gap-3" noValidate>
        <label className="grid gap-1 text-sm font-medium">
          Slug of the project to delete
          <input className={inputClass} value={typed} onChange={(e) => (setTyped(e.target.value), setDone(null))} autoComplete="off" />
        </label>
        <button type="submit" className={buttonClass.accent} disabled={!target || remove.isPending}>
          {target ? `Delete ${target.name} and its runs` : 'Delete the project'}
        </button>
      </form>
      {done && <p role="status" className="mt-3 text-sm font-medium text-pass-700">Deleted {done}.</p>}
      <FormError error={remove.error ? errorMessage(remove.error) : null} />
    </section>
  );
}
