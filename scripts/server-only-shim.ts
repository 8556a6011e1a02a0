// For Node scripts that import Lobeline's data layer outside Next (scripts/demo-scans.ts, the N5 bench): the data
// layer imports 'server-only', a marker package that throws unless Next's server bundler resolves it. Importing
// this module registers a loader hook that resolves 'server-only' to an empty module for this process. Import it
// before anything that reaches lib/db or lib/ingest is loaded (those are imported dynamically after it).
import { register } from 'node:module';

const hook = `export async function resolve(s, c, next) {
  if (s === 'server-only') return { url: 'data:text/javascript,export{}', shortCircuit: true };
  return next(s, c);
}`;
register(`data:text/javascript,${encodeURIComponent(hook)}`);
