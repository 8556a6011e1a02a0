// A tiny structured logger: one JSON object per line on stderr.
// The level comes from LOG_LEVEL (debug | info | warn | error; default info). It reads process.env directly so
// that it works before (and while) lib/env.ts reports a broken environment.

export type LogLevel = 'debug' | 'info' | 'warn' | 'error';
export type LogFields = Record<string, unknown>;

const ORDER: Record<LogLevel, number> = { debug: 10, info: 20, warn: 30, error: 40 };

function currentLevel(): LogLevel {
  const raw = (process.env.LOG_LEVEL ?? '').trim().toLowerCase();
  return raw in ORDER ? (raw as LogLevel) : 'info';
}

/** Turns an Error (with its cause chain) into plain JSON-friendly fields. */
export function serializeError(err: unknown, depth = 0): unknown {
  if (!(err instanceof Error)) return err;
  const out: Record<string, unknown> = { name: err.name, message: err.message };
  const extra = err as Error & { code?: unknown; $metadata?: unknown; details?: unknown };
  if (extra.code !== undefined) out.code = extra.code;
  if (extra.details !== undefined) out.details = extra.details;
  if (extra.$metadata !== undefined) out.metadata = extra.$metadata;
  if (err.stack) out.stack = err.stack.split('\n').slice(0, 8).join('\n');
  if (err.cause !== undefined && depth < 4) out.cause = serializeError(err.cause, depth + 1);
  return out;
}

function normalize(fields: LogFields): LogFields {
  const out: LogFields = {};
  for (const [k, v] of Object.entries(fields)) out[k] = v instanceof Error ? serializeError(v) : v;
  return out;
}

function write(level: LogLevel, bindings: LogFields, msg: string, fields?: LogFields): void {
  if (ORDER[level] < ORDER[currentLevel()]) return;
  const record = { time: new Date().toISOString(), level, msg, ...bindings, ...(fields ? normalize(fields) : {}) };
  let line: string;
  try {
    line = JSON.stringify(record, (_k, v) => (typeof v === 'bigint' ? v.toString() : v));
  } catch {
    line = JSON.stringify({ time: record.time, level, msg, note: 'fields could not be serialized' });
  }
  process.stderr.write(`${line}\n`);
}

export interface Logger {
  debug(msg: string, fields?: LogFields): void;
  info(msg: string, fields?: LogFields): void;
  warn(msg: string, fields?: LogFields): void;
  error(msg: string, fields?: LogFields): void;
  child(bindings: LogFields): Logger;
  isLevelEnabled(level: LogLevel): boolean;
}

function makeLogger(bindings: LogFields): Logger {
  return {
    debug: (msg, fields) => write('debug', bindings, msg, fields),
    info: (msg, fields) => write('info', bindings, msg, fields),
    warn: (msg, fields) => write('warn', bindings, msg, fields),
    error: (msg, fields) => write('error', bindings, msg, fields),
    child: (more) => makeLogger({ ...bindings, ...more }),
    isLevelEnabled: (level) => ORDER[level] >= ORDER[currentLevel()],
  };
}

export const log: Logger = makeLogger({});
