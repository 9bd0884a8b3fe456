// What `pleat init --ci <host>` and `pleat init --hook` write: a CI job per hosted CI system
// (check, upload with the token from the CI's secret store, the report as an artifact) and a
// git pre-commit hook that checks the staged design files only.

export interface CiTemplate {
  host: string;
  /** Where the file goes, relative to the repository root. */
  file: string;
  text: string;
  /** Where the token is kept, said after writing. */
  secret: string;
}

const GITHUB = `# Folding gate of this repository, written by \`pleat init --ci github\` (docs/cli.md).
# Checks the design files on every push and pull request, uploads the report to the Pleat
# server and keeps it as an artifact. Set the CI token as the repository secret PLEAT_TOKEN and
# the server in pleat.config.yaml (server.url, server.project).
name: pleat

on:
  push:
  pull_request:

jobs:
  folding-gate:
    runs-on: ubuntu-latest
    steps:
      - uses: actions/checkout@v4
        with:
          fetch-depth: 0 # the merge-base with the base branch, for the server's comparison
      - uses: actions/setup-node@v4
        with:
          node-version: 20
      - run: npm ci
      - name: Check the folding plans and upload the report
        env:
          PLEAT_TOKEN: \${{ secrets.PLEAT_TOKEN }}
        run: npx pleat check --upload --format markdown --output "$GITHUB_STEP_SUMMARY"
      - name: Keep the report
        if: always()
        uses: actions/upload-artifact@v4
        with:
          name: pleat-report
          path: .pleat/report.json
          if-no-files-found: ignore
`;

const GITLAB = `# Folding gate of this repository, written by \`pleat init --ci gitlab\` (docs/cli.md).
# Checks the design files in every pipeline, uploads the report to the Pleat server, shows the
# findings in merge requests (code quality) and keeps the report as an artifact. Set the CI
# token as the masked CI/CD variable PLEAT_TOKEN and the server in pleat.config.yaml
# (server.url, server.project).
pleat:
  image: node:20
  stage: test
  variables:
    GIT_DEPTH: "0" # the merge-base with the target branch, for the server's comparison
  script:
    - npm ci
    - npx pleat check --upload --format gitlab --output pleat-code-quality.json
  artifacts:
    when: always
    paths:
      - .pleat/report.json
    reports:
      codequality: pleat-code-quality.json
`;

export const CI_TEMPLATES: Record<string, CiTemplate> = {
  github: { host: 'GitHub Actions', file: '.github/workflows/pleat.yml', text: GITHUB, secret: 'a repository secret named PLEAT_TOKEN (Settings, Secrets and variables, Actions)' },
  gitlab: { host: 'GitLab CI', file: '.gitlab-ci.yml', text: GITLAB, secret: 'a masked CI/CD variable named PLEAT_TOKEN (Settings, CI/CD, Variables)' },
};

/** Single quotes for sh: the text as one word, whatever it holds. */
function shQuote(s: string): string {
  return `'${s.replace(/'/g, `'\\''`)}'`;
}

/**
 * The pre-commit hook. It copies the staged version of each staged design file (and the
 * config, as staged) into a temporary folder and checks those, so what is checked is what goes
 * into the commit, and the paths read as in the repository. `pleat` is run as it ran `init`.
 */
export function hookText(node: string, cli: string): string {
  return `#!/bin/sh
# Folding gate before each commit, written by \`pleat init --hook\` (docs/cli.md).
# Checks the design files (*.fold.yaml) of this commit as staged; other files are not read.
# Skip it once with \`git commit --no-verify\`; write it again after moving pleat.
pleat() { ${shQuote(node)} ${shQuote(cli)} "$@"; }

names=$(git -c core.quotePath=false diff --cached --name-only --diff-filter=ACMR -- '*.fold.yaml') || exit 1
[ -n "$names" ] || exit 0

tmp=$(mktemp -d "\${TMPDIR:-/tmp}/pleat-hook.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT

set -f
old_ifs=$IFS
IFS='
'
set -- $names
IFS=$old_ifs
set +f

git checkout-index --prefix="$tmp/" -- "$@" || exit 1
if git cat-file -e :pleat.config.yaml 2>/dev/null; then
  git checkout-index --prefix="$tmp/" -- pleat.config.yaml || exit 1
fi

cd "$tmp" || exit 1
pleat check "$@"
status=$?
if [ "$status" -ne 0 ]; then
  echo "pleat: commit stopped: the staged designs above do not pass (exit $status)" >&2
fi
exit "$status"
`;
}
