// The import rules of DEVELOPERS.md ("Layout"), enforced: `npm test` runs
// `depcruise --config .dependency-cruiser.cjs shared solvers cli server src` and fails on any error.
/** @type {import('dependency-cruiser').IConfiguration} */
module.exports = {
  forbidden: [
    { name: 'no-circular', severity: 'error', comment: 'An import circle makes the order of the stages unreadable.', from: {}, to: { circular: true } },
    {
      name: 'engine-is-pure', severity: 'error',
      comment: 'shared/ runs in the CLI, the server and the browser: no Node built-ins, no npm packages but yaml, js-yaml (and js-yaml-5, its 5.x under an alias, for positions) and ajv.',
      from: { path: '^shared/' },
      to: { dependencyTypes: ['core', 'npm', 'npm-dev', 'npm-optional', 'npm-peer', 'npm-no-pkg', 'npm-unknown'], pathNot: '^node_modules/(yaml|js-yaml|js-yaml-5|ajv)/' },
    },
    { name: 'engine-imports-only-engine', severity: 'error', from: { path: '^shared/' }, to: { dependencyTypes: ['local'], pathNot: '^shared/' } },
    { name: 'design-stage-first', severity: 'error', comment: 'The design file stage comes before the analysis, hardware and report stages.', from: { path: '^shared/design/' }, to: { path: '^shared/(analysis|hardware|report|planning)/' } },
    { name: 'analysis-before-hardware', severity: 'error', from: { path: '^shared/analysis/' }, to: { path: '^shared/(hardware|report|planning)/' } },
    { name: 'report-after-hardware', severity: 'error', from: { path: '^shared/hardware/' }, to: { path: '^shared/(report|planning)/' } },
    { name: 'solvers-only-engine-types', severity: 'error', comment: 'solvers/ adapts npm solver packages to the engine interfaces; CLI and server both take it.', from: { path: '^solvers/', pathNot: '\\.test\\.ts$' }, to: { dependencyTypes: ['local'], pathNot: '^(shared|solvers)/' } },
    { name: 'cli-not-server', severity: 'error', from: { path: '^cli/' }, to: { path: '^(server|src)/' } },
    { name: 'server-not-cli', severity: 'error', from: { path: '^server/' }, to: { path: '^(cli|src)/' } },
    { name: 'web-only-engine', severity: 'error', comment: 'The web app talks to the server through its API client only.', from: { path: '^src/' }, to: { path: '^(cli|server|solvers)/' } },
    { name: 'app-not-tests', severity: 'error', from: { path: '^(shared|cli|src)/', pathNot: '\\.test\\.tsx?$' }, to: { path: '^tests/' } },
    {
      name: 'server-test-helpers-only-in-tests', severity: 'error',
      from: { path: '^server/', pathNot: ['\\.test\\.ts$', '^server/test/'] }, to: { path: '^server/test/' },
    },
  ],
  options: {
    doNotFollow: { path: 'node_modules' },
    tsPreCompilationDeps: true,
    tsConfig: { fileName: 'tsconfig.json' },
    enhancedResolveOptions: { exportsFields: ['exports'], conditionNames: ['import', 'require', 'node', 'default', 'types'], extensions: ['.ts', '.tsx', '.js', '.mjs', '.cjs', '.json'] },
    exclude: { path: '(^|/)(dist|node_modules)/' },
  },
};
