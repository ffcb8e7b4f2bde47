// Keeping the product's processes running for `npm start`: a child that dies is started again after a
// growing pause, and the others keep running. Standard library only, like the other operations scripts.
import { startService } from './services.mjs';

/** Pauses before restart number 1, 2, 3, …: doubling from 0.5 s up to 30 s. */
export function restartDelayMs(restartNumber) {
  return Math.min(30_000, 500 * 2 ** Math.max(0, restartNumber - 1));
}

/** A process that ran this long without dying is healthy again: its next restart waits the shortest pause. */
const STABLE_MS = 60_000;

/**
 * @typedef {object} Supervised
 * @property {string} name
 * @property {() => import('./services.mjs').Service} current   the running (or last) process
 * @property {Promise<void>} firstStart   resolves once the first process is up
 * @property {() => Promise<void>} stop  stops it and restarts no more
 * @property {{ at: number, code: number | null, signal: string | null, upAt: number | null }[]} restarts
 */

/**
 * Starts a service and starts it again whenever it exits while not stopped, with backoff.
 * `ready` (optional) is awaited after each start; a failed readiness check counts as a crash.
 * @param {string} name
 * @param {string} file
 * @param {string[]} args
 * @param {{ env?: NodeJS.ProcessEnv, log: (message: string) => void, ready?: (service: import('./services.mjs').Service) => Promise<void>, onStarted?: () => void }} options
 * @returns {Supervised}
 */
export function superviseService(name, file, args, options) {
  let stopped = false;
  let restartNumber = 0;
  /** @type {import('./services.mjs').Service} */
  let service;
  /** @type {ReturnType<typeof setTimeout> | undefined} */
  let timer;
  /** @type {Supervised['restarts']} */
  const restarts = [];

  const launch = async (downSince) => {
    const startedAt = Date.now();
    service = startService(name, file, args, {
      env: options.env,
      onExit: (code, signal) => {
        // Whatever the dead process left in its group (tsx's inner node process, a shell's children)
        // goes too, so the next one does not find its port taken.
        try {
          if (service.child.pid) process.kill(-service.child.pid, 'SIGKILL');
        } catch {
          // the group is empty already
        }
        if (stopped) return;
        if (Date.now() - startedAt > STABLE_MS) restartNumber = 0;
        restartNumber += 1;
        const delay = restartDelayMs(restartNumber);
        const how = signal ? `signal ${signal}` : `code ${code}`;
        options.log(
          `${name} exited (${how}); restarting in ${(delay / 1000).toFixed(1)} s (restart ${restartNumber})`,
        );
        const entry = { at: Date.now(), code, signal, upAt: null };
        restarts.push(entry);
        timer = setTimeout(() => void launch(entry), delay);
      },
    });
    options.onStarted?.();
    if (options.ready) {
      try {
        await options.ready(service);
      } catch (e) {
        if (!stopped) options.log(`${name} did not come up: ${e instanceof Error ? e.message : String(e)}`);
        if (!downSince) throw e;
        return;
      }
    }
    if (downSince && !stopped) {
      downSince.upAt = Date.now();
      const downMs = downSince.upAt - downSince.at;
      options.log(`${name} is running again (${(downMs / 1000).toFixed(1)} s after it exited)`);
      options.onStarted?.();
    }
  };

  // Started on the next tick, so the caller holds the handle before the first onStarted call.
  const firstStart = Promise.resolve().then(() => launch(null));
  return {
    name,
    current: () => service,
    firstStart,
    restarts,
    async stop() {
      stopped = true;
      clearTimeout(timer);
      await service?.stop();
    },
  };
}
