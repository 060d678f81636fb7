/**
 * One readable line for the first problem zod found in a JSON document
 * (station files, simulator scenarios): the field's path and why,
 * e.g. `fibre.diameter_m: must be > 0`, `input.columns[1]: must be one of …`.
 */
import type { z } from 'zod';

export interface FirstIssue {
  /** dotted path of the offending field ('' at the top level) */
  field: string;
  /** "<field>: <why>" */
  text: string;
}

/** Describe the first issue of a failed parse of `value`. */
export function firstIssue(error: z.ZodError, value: unknown): FirstIssue {
  const issue = error.issues[0];
  const field = issue.path.map((p) => (typeof p === 'number' ? `[${p}]` : String(p))).join('.').replace(/\.\[/g, '[');
  if (issue.code === 'unrecognized_keys') {
    const key = `${field ? `${field}.` : ''}${(issue as { keys: string[] }).keys[0]}`;
    return { field: key, text: `${key}: unknown field` };
  }
  const why = issue.code === 'invalid_type' && valueAt(value, issue.path) === undefined ? 'is required' : issue.message;
  return { field, text: `${field || '(top level)'}: ${why}` };
}

function valueAt(root: unknown, path: PropertyKey[]): unknown {
  let v: unknown = root;
  for (const k of path) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<PropertyKey, unknown>)[k];
  }
  return v;
}
