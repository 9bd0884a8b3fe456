// Every path of the web app in one place. They match the links the server puts in e-mail
// (/projects/:slug/runs/:id, /invitations/:token).
const seg = encodeURIComponent;

/** Branch names may hold slashes (feature/x): each part is encoded and the route takes the rest of the path. */
export const branchPath = (branch: string) => branch.split('/').map(seg).join('/');

export const to = {
  home: () => '/',
  signIn: (next?: string) => (next && next !== '/' ? `/signin?next=${seg(next)}` : '/signin'),
  signOut: () => '/signout',
  project: (slug: string) => `/projects/${seg(slug)}`,
  branch: (slug: string, branch: string, design?: string | null) =>
    `/projects/${seg(slug)}/branches/${branchPath(branch)}${design ? `?design=${seg(design)}` : ''}`,
  run: (slug: string, id: number, design?: string | null) => `/projects/${seg(slug)}/runs/${id}${design ? `?design=${seg(design)}` : ''}`,
  rules: (slug: string) => `/projects/${seg(slug)}/rules`,
  tokens: (slug: string) => `/projects/${seg(slug)}/tokens`,
  host: (slug: string) => `/projects/${seg(slug)}/host`,
  members: (slug: string) => `/projects/${seg(slug)}/members`,
  jobs: (slug: string) => `/projects/${seg(slug)}/jobs`,
  job: (slug: string, id: number) => `/projects/${seg(slug)}/jobs/${id}`,
  tryDesign: (project?: string | null) => (project ? `/try?project=${seg(project)}` : '/try'),
  users: () => '/admin/users',
};
