// Request bodies are checked against JSON Schemas (ajv) before a handler reads them.
import { Ajv, type ValidateFunction } from 'ajv';
import { storableJsonProblems } from '../../shared/report/reportSchema';
import { badRequest } from './errors';

const ajv = new Ajv({ allErrors: true, strict: false, verbose: true });

export type Check<T> = (body: unknown) => T;

/** Compiles a schema into a function that returns the body typed, or throws 400 with every problem. */
export function checker<T>(schema: object, what = 'request body'): Check<T> {
  const validate: ValidateFunction = ajv.compile(schema);
  return (body) => {
    // NUL, lone surrogates and deep nesting pass JSON but not PostgreSQL: refused here as 400.
    const unstorable = storableJsonProblems(body);
    if (unstorable.length) throw badRequest(`The ${what} is not valid: ${unstorable[0]!.path} ${unstorable[0]!.message}.`, unstorable);
    if (validate(body)) return body as T;
    const problems = (validate.errors ?? []).slice(0, 20).map((e) => ({
      path: e.instancePath || '/',
      // A pattern's own explanation ('x-message' beside it) says more than the regular expression.
      message: (e.keyword === 'pattern' ? (e.parentSchema as { 'x-message'?: string } | undefined)?.['x-message'] : undefined) ?? e.message ?? 'is not valid',
    }));
    const first = problems[0];
    throw badRequest(`The ${what} is not valid: ${first ? `${first.path} ${first.message}` : 'unknown problem'}.`, problems);
  };
}

/** A positive integer route parameter, or 404 (an id that cannot exist names nothing). */
export function idParam(value: string | undefined): number | null {
  return value && /^\d{1,9}$/.test(value) ? Number(value) : null;
}
