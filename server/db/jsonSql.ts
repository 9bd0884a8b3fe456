// SQL expressions whose text is what JSON.stringify writes for the same value as the server reads it
// through pg (ECMA-262, JSON.stringify and Number::toString), so a response PostgreSQL builds as text
// is byte for byte the one the presenters would have serialised (server/resources/runs/history.ts).
// PostgreSQL's own json_build_object/json_agg cannot be used for that: they put spaces after
// colons and commas, and write floats in their own notation (1e-05 where JavaScript writes 0.00001).

/**
 * A text value: to_json escapes as JSON.stringify does (\", \\, \b \f \n \r \t, \u00xx for other
 * controls). `notNull` for a NOT NULL column saves the coalesce.
 */
export const jsonString = (expr: string, notNull = false): string => (notNull ? `to_json(${expr})::text` : `coalesce(to_json(${expr})::text, 'null')`);

/** An integer or boolean column: its text form is the JSON one (digits; true/false). */
export const jsonPlain = (expr: string, notNull = false): string => (notNull ? `(${expr})::text` : `coalesce((${expr})::text, 'null')`);

/**
 * A text column that a CHECK constraint keeps to a few plain words (a verdict, a status): no
 * character of them needs escaping.
 */
export const jsonWord = (expr: string): string => `'"' || ${expr} || '"'`;

/**
 * Marks a value that the SQL below cannot write as JSON.stringify does: a control character, which
 * never appears raw in JSON text (jsonString escapes them), so `text.includes(UNWRITTEN)` tells the
 * caller to present that response in JavaScript instead.
 */
export const UNWRITTEN = '\u0001';

/**
 * A double precision value as JavaScript writes the same double. PostgreSQL (extra_float_digits
 * 1, its default) writes the shortest digits that read back exactly, as JavaScript does, in plain
 * decimals for exponents -4 to 14 and as d.ddde-XX below; JavaScript writes plain decimals down to
 * exponent -7 and d.ddde-X below. So the usual range is PostgreSQL's text, and smaller values are
 * rewritten from its digits and exponent. From 1e15 up PostgreSQL writes the exact digits of
 * integers past 2^53 where JavaScript writes the shortest: those come out as UNWRITTEN. -0 is 0,
 * and NaN and infinities are null, as in JSON.stringify.
 */
export function jsonFloat(expr: string): string {
  const x = `(${expr})`;
  return `CASE WHEN ${x} IS NULL OR ${x} = 'NaN'::float8 OR ${x} = 'Infinity'::float8 OR ${x} = '-Infinity'::float8 THEN 'null'
    WHEN ${x} = 0 THEN '0'
    WHEN abs(${x}) >= '1e15'::float8 THEN chr(1)
    WHEN abs(${x}) >= '1e-4'::float8 THEN ${x}::text
    ELSE (SELECT CASE WHEN ${x} < 0 THEN '-' ELSE '' END
        || CASE WHEN f.e >= -6 THEN '0.' || repeat('0', -f.e - 1) || f.d
           ELSE substr(f.d, 1, 1) || CASE WHEN length(f.d) > 1 THEN '.' || substr(f.d, 2) ELSE '' END || 'e-' || (-f.e)::text END
      FROM (SELECT m[1] || coalesce(m[2], '') AS d, m[3]::int AS e FROM regexp_match(abs(${x})::text, '^(\\d)(?:\\.(\\d+))?e(-\\d+)$') AS m) f)
  END`;
}

/**
 * A timestamptz as Date.prototype.toISOString writes the Date that pg makes of it: UTC,
 * milliseconds truncated from PostgreSQL's microseconds (as postgres-date and Date.UTC do), in
 * quotes. Years 0 to 9999 (JavaScript writes others with a sign and six digits).
 */
export const jsonDate = (expr: string): string =>
  `coalesce('"' || to_char((${expr}) AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') || '"', 'null')`;

/**
 * `{"key":value,...}` of [key, JSON-text SQL] pairs, in that order, and `tail` (SQL of text such as
 * `,"more":...`, or '') before the closing brace. One concat() call per object: PostgreSQL
 * copies each piece once instead of making a new string at every `||`.
 */
export function jsonObject(fields: [string, string][], tail?: string): string {
  const parts = fields.flatMap(([k, v], i) => [`'${i === 0 ? '{' : ','}${JSON.stringify(k)}:'`, v]);
  return `concat(${[...parts, ...(tail ? [tail] : []), `'}'`].join(', ')})`;
}
