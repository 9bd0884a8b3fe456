// One hook per query and per mutation. Query keys live here only, so a mutation knows exactly
// which cached answers it makes stale.
import { keepPreviousData, useInfiniteQuery, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api, type StartJob } from './client';
import type { HostKind, Me, Role, TeamRuleSet } from './types';

export const keys = {
  me: ['me'] as const,
  projects: ['projects'] as const,
  project: (slug: string) => ['project', slug] as const,
  branches: (slug: string) => ['branches', slug] as const,
  runs: (slug: string, branch: string, design: string | null) => ['runs', slug, branch, design ?? ''] as const,
  run: (id: number) => ['run', id] as const,
  rules: (slug: string) => ['rules', slug] as const,
  ruleHistory: (slug: string) => ['ruleHistory', slug] as const,
  tokens: (slug: string) => ['tokens', slug] as const,
  host: (slug: string) => ['host', slug] as const,
  members: (slug: string) => ['members', slug] as const,
  invitations: (slug: string) => ['invitations', slug] as const,
  invitation: (token: string) => ['invitation', token] as const,
  users: ['users'] as const,
  jobs: (slug: string) => ['jobs', slug] as const,
  job: (id: number) => ['job', id] as const,
};

// ---------------------------------------------------------------- session

export function useMe() {
  return useQuery({ queryKey: keys.me, queryFn: ({ signal }) => api.me(signal), staleTime: 5 * 60_000 });
}

export function useLogin() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { email: string; password: string }) => api.login(v.email, v.password),
    onSuccess: (me: Me) => {
      // Another person may have used this tab before: nothing cached may survive a sign-in.
      qc.clear();
      qc.setQueryData(keys.me, me);
    },
  });
}

export function useLogout() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.logout(),
    onSettled: () => qc.clear(),
  });
}

// ---------------------------------------------------------------- projects, branches, runs

export function useProjects(enabled = true) {
  return useQuery({ queryKey: keys.projects, queryFn: ({ signal }) => api.projects(signal), enabled });
}

export function useProject(slug: string) {
  return useQuery({ queryKey: keys.project(slug), queryFn: ({ signal }) => api.project(slug, signal) });
}

export function useCreateProject() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { slug: string; name: string; baseBranch?: string }) => api.createProject(v),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.projects }),
  });
}

export function useDeleteProject() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { slug: string; confirm: string }) => api.deleteProject(v.slug, v.confirm),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.projects }),
  });
}

export function useUpdateProject(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { name?: string; baseBranch?: string; regressionTolerance?: number; branchRunDays?: number | null; reason?: string }) => api.updateProject(slug, v),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: keys.project(slug) });
      void qc.invalidateQueries({ queryKey: keys.projects });
      void qc.invalidateQueries({ queryKey: keys.rules(slug) });
      void qc.invalidateQueries({ queryKey: keys.ruleHistory(slug) });
    },
  });
}

export function useBranches(slug: string) {
  return useQuery({ queryKey: keys.branches(slug), queryFn: ({ signal }) => api.branches(slug, signal) });
}

/** One page of a branch's history, newest first, from `offset` runs in (a page number of the address). */
export function useRunPage(slug: string, branch: string, design: string | null, offset: number, limit: number, enabled = true) {
  return useQuery({
    queryKey: [...keys.runs(slug, branch, design), offset, limit],
    queryFn: ({ signal }) => api.runs(slug, branch, { offset, limit, design }, signal),
    placeholderData: keepPreviousData,
    enabled,
  });
}

export function useRun(id: number) {
  return useQuery({
    queryKey: keys.run(id),
    queryFn: ({ signal }) => api.run(id, signal),
    enabled: Number.isInteger(id) && id > 0,
    staleTime: Infinity, // a stored run never changes
  });
}

export function useWatch(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { branch: string; watch: boolean }) => (v.watch ? api.watch(slug, v.branch) : api.unwatch(slug, v.branch)),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.branches(slug) }),
  });
}

// ---------------------------------------------------------------- rules

export function useRules(slug: string) {
  return useQuery({ queryKey: keys.rules(slug), queryFn: ({ signal }) => api.rules(slug, signal) });
}

export function useRuleHistory(slug: string) {
  return useInfiniteQuery({
    queryKey: keys.ruleHistory(slug),
    queryFn: ({ pageParam, signal }) => api.ruleHistory(slug, pageParam, signal),
    initialPageParam: null as number | null,
    getNextPageParam: (last) => last.nextBefore,
  });
}

export function useSaveRules(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { rules: TeamRuleSet; reason?: string }) => api.saveRules(slug, v.rules, v.reason),
    onSuccess: (data) => {
      qc.setQueryData(keys.rules(slug), data);
      void qc.invalidateQueries({ queryKey: keys.ruleHistory(slug) });
    },
  });
}

/** Back to the rules as they were after change `to`; the tolerance may change too, so the project is refetched. */
export function useRevertRules(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { to: number; reason?: string }) => api.revertRules(slug, v.to, v.reason),
    onSuccess: (data) => {
      qc.setQueryData(keys.rules(slug), data);
      void qc.invalidateQueries({ queryKey: keys.ruleHistory(slug) });
      void qc.invalidateQueries({ queryKey: keys.project(slug) });
    },
  });
}

// ---------------------------------------------------------------- tokens

export function useTokens(slug: string) {
  return useQuery({ queryKey: keys.tokens(slug), queryFn: ({ signal }) => api.tokens(slug, signal) });
}

export function useCreateToken(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (name: string) => api.createToken(slug, name),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.tokens(slug) }),
  });
}

export function useRevokeToken(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api.revokeToken(slug, id),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.tokens(slug) }),
  });
}

// ---------------------------------------------------------------- git host

export function useHost(slug: string) {
  return useQuery({ queryKey: keys.host(slug), queryFn: ({ signal }) => api.host(slug, signal) });
}

function useHostMutation<V, R>(slug: string, fn: (v: V) => Promise<R>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: fn,
    // Awaited, so "Saved" shows only once the form holds the stored connection (its token hint).
    // The project carries the host's status too (shown on every page of the project).
    onSuccess: () =>
      Promise.all([qc.invalidateQueries({ queryKey: keys.host(slug) }), qc.invalidateQueries({ queryKey: keys.project(slug) })]),
  });
}

export const useSaveHost = (slug: string) =>
  useHostMutation(slug, (v: { kind: HostKind; apiUrl?: string; repository: string; token?: string }) => api.saveHost(slug, v));
export const useRemoveHost = (slug: string) => useHostMutation(slug, () => api.removeHost(slug));

// ---------------------------------------------------------------- members and invitations

export function useMembers(slug: string) {
  return useQuery({ queryKey: keys.members(slug), queryFn: ({ signal }) => api.members(slug, signal) });
}

export function useInvitations(slug: string) {
  return useQuery({ queryKey: keys.invitations(slug), queryFn: ({ signal }) => api.invitations(slug, signal) });
}

function useMemberMutation<V, R>(slug: string, fn: (v: V) => Promise<R>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: fn,
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: keys.members(slug) });
      void qc.invalidateQueries({ queryKey: keys.invitations(slug) });
    },
  });
}

export const useAddMember = (slug: string) => useMemberMutation(slug, (v: { email: string; role: Role }) => api.addMember(slug, v.email, v.role));
export const useSetMemberRole = (slug: string) => useMemberMutation(slug, (v: { userId: number; role: Role }) => api.setMemberRole(slug, v.userId, v.role));
export const useRemoveMember = (slug: string) => useMemberMutation(slug, (userId: number) => api.removeMember(slug, userId));
export const useCancelInvitation = (slug: string) => useMemberMutation(slug, (id: number) => api.cancelInvitation(slug, id));

export function useInvitation(token: string) {
  return useQuery({ queryKey: keys.invitation(token), queryFn: ({ signal }) => api.invitation(token, signal) });
}

export function useAcceptInvitation(token: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: { name?: string; password?: string }) => api.acceptInvitation(token, body),
    onSuccess: () => {
      // A new session may have started: forget what was cached, except the invitation on screen.
      qc.removeQueries({ predicate: (q) => q.queryKey[0] !== 'invitation' });
    },
  });
}

// ---------------------------------------------------------------- users (admins)

export function useUsers() {
  return useQuery({ queryKey: keys.users, queryFn: ({ signal }) => api.users(signal) });
}

export function useInviteUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { email: string; name?: string; isAdmin?: boolean }) => api.inviteUser(v),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.users }),
  });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { id: number; name?: string; isAdmin?: boolean; active?: boolean }) => {
      const { id, ...body } = v;
      return api.updateUser(id, body);
    },
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.users }),
  });
}

// ---------------------------------------------------------------- try a design

export function useAnalyze() {
  return useMutation({
    mutationFn: (v: { file: Blob; fileName: string; project?: string | null }) => api.analyze(v.file, v.fileName, v.project),
  });
}

// ---------------------------------------------------------------- plan and sweep jobs

const jobEnded = (status: string | undefined) => status === 'done' || status === 'failed' || status === 'cancelled';

export function useStartJob(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: StartJob) => api.startJob(slug, v),
    onSuccess: () => qc.invalidateQueries({ queryKey: keys.jobs(slug) }),
  });
}

export function useJobs(slug: string) {
  return useQuery({
    queryKey: keys.jobs(slug),
    queryFn: ({ signal }) => api.jobs(slug, signal),
    refetchInterval: (q) => (q.state.data?.jobs.some((j) => !jobEnded(j.status)) ? 2000 : false),
  });
}

/** One job; asked again every second until it has ended (progress comes from its worker). */
export function useJob(id: number) {
  return useQuery({
    queryKey: keys.job(id),
    queryFn: ({ signal }) => api.job(id, signal),
    refetchInterval: (q) => (jobEnded(q.state.data?.job.status) ? false : 1000),
  });
}

export function useCancelJob(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.cancelJob(id),
    onSuccess: (data) => qc.setQueryData(keys.job(id), data),
  });
}
