// The shape an upload must have: the JSON report of the CLI (format pleat-report/1) with the git
// facts the server files it under. Fields the CLI adds later pass through untouched.
const nullable = (schema: object) => ({ anyOf: [schema, { type: 'null' }] });
const branch = { type: 'string', minLength: 1, maxLength: 255, pattern: '^[^\\s\\x00-\\x1f]+$' };
const commit = { type: 'string', pattern: '^[0-9a-fA-F]{7,64}$' };

export const uploadSchema = {
  type: 'object',
  required: ['format', 'tool', 'git', 'verdict', 'designs'],
  properties: {
    format: { const: 'pleat-report/1' },
    tool: {
      type: 'object',
      required: ['name', 'version'],
      properties: { name: { type: 'string' }, version: { type: 'string', minLength: 1, maxLength: 64 } },
    },
    git: {
      type: 'object',
      required: ['branch', 'commit'],
      properties: { branch, commit, baseBranch: nullable(branch), baseCommit: nullable(commit) },
    },
    verdict: { enum: ['pass', 'fail', 'error'] },
    rules: { type: 'object' },
    designs: {
      type: 'array',
      maxItems: 10_000,
      items: {
        type: 'object',
        required: ['file', 'status', 'diagnostics', 'violations'],
        properties: {
          file: { type: 'string', minLength: 1, maxLength: 1000 },
          name: nullable({ type: 'string', maxLength: 255 }),
          status: { enum: ['pass', 'fail', 'error'] },
          diagnostics: { type: 'array' },
          violations: { type: 'array' },
          edges: nullable({ type: 'array' }),
          utilization: nullable({ type: 'object', required: ['overall'], properties: { overall: { type: 'number' } } }),
          registers: nullable({ type: 'object', required: ['minimum'], properties: { minimum: { type: 'integer', minimum: 0 } } }),
          retiming: nullable({ type: 'object', properties: { feasible: { type: 'boolean' } } }),
        },
      },
    },
  },
} as const;
