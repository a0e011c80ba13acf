/** Small conversions every repository needs, in one place. */

/** A well-formed uuid: ids that are not one cannot name a row, so lookups skip the query. */
export const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A timestamptz as pg (Date) or PGlite (Date or string) returns it, as an ISO string. */
export const iso = (v: unknown): string => (v instanceof Date ? v.toISOString() : new Date(String(v)).toISOString());

/** The same for a nullable column. */
export const isoOrNull = (v: unknown): string | null => (v === null || v === undefined ? null : iso(v));
