// @ts-check
// Process helpers for the operations scripts. These run before `npm ci` on a fresh machine, so they
// use Node's standard library only.
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

/** The checkout this script belongs to (server/ops/ → two levels up). */
export const repoRoot = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');

/**
 * @typedef {(message: string) => void} Log
 */

/**
 * @typedef {object} RunResult
 * @property {number} code      exit code (-1 when killed by a signal or timed out)
 * @property {string} stdout
 * @property {string} stderr
 * @property {boolean} timedOut
 */

/**
 * @typedef {object} RunOptions
 * @property {string} [cwd]
 * @property {NodeJS.ProcessEnv} [env]
 * @property {string} [input]        written to stdin, then stdin is closed
 * @property {string} [asUser]       run through `runuser -u USER --` (only when we are root)
 * @property {number} [timeoutMs]
 * @property {boolean} [passthrough] stream the child's stdout and stderr to our stderr instead of capturing
 * @property {boolean} [detached]    run in a session of its own, so a Ctrl-C in the terminal does not reach it
 */

/** @returns {boolean} */
export function isRoot() {
  return typeof process.getuid === 'function' && process.getuid() === 0;
}

/**
 * Runs a command without a shell and collects its output. Never rejects for a non-zero exit; it
 * rejects only when the program cannot be started at all.
 * @param {string} command
 * @param {string[]} args
 * @param {RunOptions} [options]
 * @returns {Promise<RunResult>}
 */
export function run(command, args, options = {}) {
  const { asUser, input, timeoutMs, passthrough = false, detached = false } = options;
  const file = asUser ? 'runuser' : command;
  const argv = asUser ? ['-u', asUser, '--', command, ...args] : args;
  return new Promise((resolvePromise, reject) => {
    const child = spawn(file, argv, {
      cwd: options.cwd ?? (asUser ? '/' : undefined),
      env: options.env ?? process.env,
      detached,
      stdio: [input === undefined ? 'ignore' : 'pipe', passthrough ? 2 : 'pipe', passthrough ? 2 : 'pipe'],
    });
    let stdout = '';
    let stderr = '';
    let timedOut = false;
    child.stdout?.setEncoding('utf8').on('data', (chunk) => (stdout += chunk));
    child.stderr?.setEncoding('utf8').on('data', (chunk) => (stderr += chunk));
    const timer =
      timeoutMs === undefined
        ? undefined
        : setTimeout(() => {
            timedOut = true;
            child.kill('SIGKILL');
          }, timeoutMs);
    child.on('error', (error) => {
      clearTimeout(timer);
      reject(new Error(`Cannot run ${file}: ${error.message}`));
    });
    child.on('close', (code) => {
      clearTimeout(timer);
      resolvePromise({ code: code ?? -1, stdout, stderr, timedOut });
    });
    if (input !== undefined && child.stdin) {
      child.stdin.on('error', () => {});
      child.stdin.end(input);
    }
  });
}

/**
 * Runs a command and throws a readable error when it fails.
 * @param {string} what   a short description for the error message ("initdb")
 * @param {string} command
 * @param {string[]} args
 * @param {RunOptions} [options]
 * @returns {Promise<RunResult>}
 */
export async function runOrThrow(what, command, args, options = {}) {
  const result = await run(command, args, options);
  if (result.code !== 0) {
    const output = `${result.stderr}\n${result.stdout}`.trim();
    const reason = result.timedOut
      ? `timed out after ${options.timeoutMs} ms`
      : `exited with code ${result.code}`;
    throw new Error(`${what} failed (${reason}): ${command} ${args.join(' ')}${output ? `\n${output}` : ''}`);
  }
  return result;
}

/**
 * Installs Debian packages with apt-get, showing apt's progress on stderr. Root only. The dpkg lock
 * timeout lets two installs started at once (PostgreSQL and the browser) queue instead of failing.
 * @param {string[]} packages
 * @param {{ log: Log, noRecommends?: boolean }} options
 */
export async function aptInstall(packages, { log, noRecommends = false }) {
  if (!isRoot()) throw new Error(`Installing ${packages.join(' ')} needs root.`);
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  const lock = ['-o', 'DPkg::Lock::Timeout=300'];
  log(`apt-get update (to install ${packages.join(' ')})`);
  await runOrThrow('apt-get update', 'apt-get', [...lock, 'update'], { env, passthrough: true });
  log(`apt-get install ${packages.join(' ')}`);
  const extra = noRecommends ? ['--no-install-recommends'] : [];
  await runOrThrow('apt-get install', 'apt-get', [...lock, 'install', '-y', ...extra, ...packages], {
    env,
    passthrough: true,
  });
}

/**
 * @param {string} path
 * @returns {string | undefined} hex sha256 of the file, or undefined when it does not exist
 */
export function sha256File(path) {
  if (!existsSync(path)) return undefined;
  return createHash('sha256').update(readFileSync(path)).digest('hex');
}

/**
 * @param {string} text
 * @returns {string} hex sha256 of the text
 */
export function sha256Text(text) {
  return createHash('sha256').update(text).digest('hex');
}

/**
 * @param {number} ms
 * @returns {Promise<void>}
 */
export function sleep(ms) {
  return new Promise((resolvePromise) => setTimeout(resolvePromise, ms));
}

/**
 * A logger that prefixes its lines, for scripts that print progress.
 * @param {string} prefix
 * @param {NodeJS.WritableStream} [stream]
 * @returns {Log}
 */
export function prefixedLog(prefix, stream = process.stderr) {
  return (message) => stream.write(`[${prefix}] ${message}\n`);
}

/**
 * True when this module file is the script node was started with (so it should act as a CLI).
 * @param {string} moduleUrl import.meta.url of the caller
 * @returns {boolean}
 */
export function isMain(moduleUrl) {
  const entry = process.argv[1];
  return entry !== undefined && resolve(entry) === fileURLToPath(moduleUrl);
}
