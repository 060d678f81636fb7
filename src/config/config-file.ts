/**
 * Reading and validating our JSON configuration files (station files and the
 * simulator's scenarios) the same way: one error type that names the field,
 * one message per kind of fault.
 */
import { readFileSync } from 'node:fs';
import type { z } from 'zod';
import { firstIssue } from './first-issue.js';

/** A configuration file that cannot be used: the message names the file and field (`fibre.diameter_m: must be > 0`). */
export class ConfigError extends Error {
  constructor(message: string, readonly field: string) {
    super(message);
    this.name = 'ConfigError';
  }
}

/** Validate `value` against `schema`; the first problem becomes `fail(message, field)`. */
export function validateConfig<S extends z.ZodType>(schema: S, value: unknown, source: string, fail: (message: string, field: string) => ConfigError): z.output<S> {
  const r = schema.safeParse(value);
  if (!r.success) {
    const f = firstIssue(r.error, value);
    throw fail(`${source}: ${f.text}`, f.field);
  }
  return r.data;
}

/**
 * Read a JSON file; a missing or unreadable file and a syntax error name the
 * file (`what` says which kind it is). A UTF-8 byte-order mark, which some
 * editors write, is accepted.
 */
export function readJsonFile(path: string, what: string, fail: (message: string, field: string) => ConfigError): unknown {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    throw fail(`${path}: cannot read ${what} (${(e as NodeJS.ErrnoException).code ?? e})`, '');
  }
  try {
    return JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch (e) {
    throw fail(`${path}: not valid JSON (${(e as Error).message})`, '');
  }
}
