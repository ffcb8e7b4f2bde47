// Starting and stopping the product's own processes (server, worker, fake mail server) for
// `npm start` and `npm test`. Standard library only, like the other operations scripts.
import { spawn } from 'node:child_process';
import { createServer } from 'node:net';
import { join } from 'node:path';
import { repoRoot, sleep } from './proc.mjs';

/** The tsx launcher from node_modules (installed by ensureDeps before anything here runs). */
export const TSX = join(repoRoot, 'node_modules', '.bin', 'tsx');

/**
 * V8's heap settings for an API process (tsx passes them to node). The statistics keep their rows in typed
 * arrays outside the JS heap; what a view leaves on the heap is garbage within the request. By default V8 lets
 * its young generation grow to 2 × 16 MB and its old generation to up to four times what survived the last full
 * collection before collecting again, so an API process serving a few 10,000-point charts in a row held ~130 MB
 * of heap for ~40 MB of live objects. Young generation capped at 2 × 4 MB, old generation collected once it
 * doubles: peak RSS about 60 MB lower in `npm run bench:stats`, with no more CPU per view (decision 69).
 */
export const API_NODE_FLAGS = ['--max-semi-space-size=4', '--heap-growing-percent=100'];

/**
 * Node options of a traveler renderer (`npm start`, bench:line): a render makes megabytes of short-lived
 * garbage, which a young generation of 2 × 16 MB collects less often. That is V8's own maximum on a machine
 * like this one (it starts at 1 MB and grows under allocation pressure); the option pins it where V8 would
 * pick less.
 */
export const RENDERER_NODE_OPTIONS = '--max-semi-space-size=16';

/**
 * @typedef {object} Service
 * @property {string} name
 * @property {import('node:child_process').ChildProcess} child
 * @property {Promise<number | null>} exited  resolves with the exit code when the process ends
 * @property {() => Promise<void>} stop       SIGTERM to the whole process group, SIGKILL after 8 s
 */

/**
 * Starts a long-running child in its own process group (so a stop reaches every process it
 * spawns, and a Ctrl-C in the terminal is handled by us, in order) with its output prefixed.
 * @param {string} name
 * @param {string} file
 * @param {string[]} args
 * @param {{ env?: NodeJS.ProcessEnv, quiet?: boolean, onExit?: (code: number | null, signal: string | null) => void }} [options]
 * @returns {Service}
 */
export function startService(name, file, args, options = {}) {
  const child = spawn(file, args, {
    cwd: repoRoot,
    env: options.env ?? process.env,
    detached: true,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  const prefix = (chunk) =>
    chunk
      .toString()
      .split('\n')
      .filter((l) => l.length > 0)
      .map((l) => `[${name}] ${l}\n`)
      .join('');
  const keep = [];
  for (const stream of [child.stdout, child.stderr]) {
    stream.on('data', (chunk) => {
      if (options.quiet) {
        keep.push(chunk.toString());
        if (keep.length > 200) keep.shift();
      } else process.stderr.write(prefix(chunk));
    });
  }
  let stopping = false;
  const exited = new Promise((resolvePromise) => {
    child.on('exit', (code, signal) => {
      if (!stopping && options.quiet && code !== 0) process.stderr.write(prefix(keep.join('')));
      if (!stopping) options.onExit?.(code, signal);
      resolvePromise(code);
    });
    child.on('error', (err) => {
      process.stderr.write(`[${name}] could not start: ${err.message}\n`);
      resolvePromise(-1);
    });
  });
  return {
    name,
    child,
    exited,
    async stop() {
      stopping = true;
      if (child.exitCode !== null || child.pid === undefined) return;
      const group = -child.pid;
      try {
        process.kill(group, 'SIGTERM');
      } catch {
        return;
      }
      const timer = setTimeout(() => {
        try {
          process.kill(group, 'SIGKILL');
        } catch {
          // already gone
        }
      }, 8000);
      await exited;
      clearTimeout(timer);
    },
  };
}

/**
 * A TCP port that is free on 127.0.0.1 right now.
 * @returns {Promise<number>}
 */
export function freePort() {
  return new Promise((resolvePromise, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const address = srv.address();
      srv.close(() => resolvePromise(typeof address === 'object' && address ? address.port : 0));
    });
  });
}

/**
 * True when something accepts connections on 127.0.0.1:port.
 * @param {number} port
 */
export function portInUse(port) {
  return new Promise((resolvePromise) => {
    const srv = createServer();
    srv.once('error', () => resolvePromise(true));
    srv.listen(port, '127.0.0.1', () => srv.close(() => resolvePromise(false)));
  });
}

/**
 * Polls a URL until it answers 2xx, the service exits, or the time runs out.
 * @param {string} url
 * @param {Service} service
 * @param {number} [timeoutMs]
 */
export async function waitForHttp(url, service, timeoutMs = 90_000) {
  const deadline = Date.now() + timeoutMs;
  let exited = false;
  service.exited.then(() => {
    exited = true;
  });
  while (Date.now() < deadline) {
    if (exited) throw new Error(`${service.name} stopped before it answered at ${url} (its output is above)`);
    try {
      const res = await fetch(url, { signal: AbortSignal.timeout(2000) });
      if (res.ok) return;
    } catch {
      // not listening yet
    }
    await sleep(150);
  }
  throw new Error(`${service.name} did not answer at ${url} within ${timeoutMs / 1000} s`);
}

/**
 * Runs a command to completion with inherited output; resolves with its exit code.
 * @param {string} file
 * @param {string[]} args
 * @param {NodeJS.ProcessEnv} [env]
 * @returns {Promise<number>}
 */
export function runStep(file, args, env = process.env) {
  return new Promise((resolvePromise) => {
    const child = spawn(file, args, { cwd: repoRoot, env, stdio: 'inherit' });
    child.on('exit', (code, signal) => resolvePromise(code ?? (signal ? 128 : 1)));
    child.on('error', () => resolvePromise(127));
  });
}
