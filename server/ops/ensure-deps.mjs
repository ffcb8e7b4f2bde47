// @ts-check
// Installs the npm packages when they are missing, or when package-lock.json or the dependency
// fields of package.json changed since the last install.
// Standard library only: this is what makes the packages available in the first place.
//
//   node server/ops/ensure-deps.mjs [--check]   (--check only reports; exit code 3 when an install is needed)
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { isMain, prefixedLog, repoRoot, run, sha256File, sha256Text } from './proc.mjs';

/** Written into node_modules after a successful install, so `npm ci` wiping node_modules also drops it. */
export const STAMP_FILE = '.phasewright-deps.json';

/**
 * @typedef {object} DepsResult
 * @property {boolean} installed    whether this call ran npm
 * @property {'ci' | 'install' | null} command
 * @property {string} reason
 * @property {number} elapsedMs
 */

/** The package.json fields that decide what npm installs; scripts and the rest do not matter here. */
const DEPENDENCY_FIELDS = [
  'dependencies',
  'devDependencies',
  'optionalDependencies',
  'peerDependencies',
  'overrides',
  'workspaces',
];

/**
 * @param {string} root
 * @returns {string}
 */
function dependencyFieldsHash(root) {
  const path = join(root, 'package.json');
  if (!existsSync(path)) throw new Error(`No package.json in ${root}.`);
  /** @type {Record<string, unknown>} */
  let manifest;
  try {
    manifest = JSON.parse(readFileSync(path, 'utf8'));
  } catch (error) {
    throw new Error(`${path} is not valid JSON: ${error instanceof Error ? error.message : String(error)}`, {
      cause: error,
    });
  }
  return sha256Text(JSON.stringify(DEPENDENCY_FIELDS.map((field) => [field, manifest[field] ?? null])));
}

/**
 * Why an install is needed, or undefined when node_modules matches the lockfile.
 * @param {string} root
 * @returns {{ reason: string | undefined, lockHash: string | undefined, manifestHash: string }}
 */
export function depsState(root = repoRoot) {
  const lockHash = sha256File(join(root, 'package-lock.json'));
  const manifestHash = dependencyFieldsHash(root);
  const nodeModules = join(root, 'node_modules');
  if (!existsSync(nodeModules)) return { reason: 'node_modules is missing', lockHash, manifestHash };
  const stampPath = join(nodeModules, STAMP_FILE);
  if (!existsSync(stampPath))
    return { reason: 'no record of a finished install in node_modules', lockHash, manifestHash };
  /** @type {{ lockHash?: string, manifestHash?: string }} */
  let stamp;
  try {
    stamp = JSON.parse(readFileSync(stampPath, 'utf8'));
  } catch {
    return { reason: 'the install record in node_modules is unreadable', lockHash, manifestHash };
  }
  if (stamp.lockHash !== lockHash)
    return { reason: 'package-lock.json changed since the last install', lockHash, manifestHash };
  // Dependencies edited in package.json without the lockfile: npm ci then says they disagree, which beats running
  // with packages other than the ones package.json names.
  if (stamp.manifestHash !== manifestHash)
    return { reason: 'package.json changed since the last install', lockHash, manifestHash };
  return { reason: undefined, lockHash, manifestHash };
}

/**
 * npm's own entry point when we were started by npm (so the same npm runs), else `npm` from PATH.
 * @returns {{ file: string, prefix: string[] }}
 */
function npmCommand() {
  const execPath = process.env.npm_execpath;
  if (execPath && /\.(c|m)?js$/.test(execPath) && existsSync(execPath))
    return { file: process.execPath, prefix: [execPath] };
  return { file: 'npm', prefix: [] };
}

/**
 * @param {{ log?: import('./proc.mjs').Log, root?: string }} [options]
 * @returns {Promise<DepsResult>}
 */
export async function ensureDeps({ log = prefixedLog('deps'), root = repoRoot } = {}) {
  const started = performance.now();
  const state = depsState(root);
  if (state.reason === undefined) {
    return {
      installed: false,
      command: null,
      reason: 'node_modules matches package-lock.json',
      elapsedMs: Math.round(performance.now() - started),
    };
  }
  const command = state.lockHash !== undefined ? 'ci' : 'install';
  log(`${state.reason}: running npm ${command} (about 20 s with a lockfile, a minute without)`);
  const npm = npmCommand();
  const args = [...npm.prefix, command, '--no-audit', '--no-fund'];
  const result = await run(npm.file, args, { cwd: root, passthrough: true });
  if (result.code !== 0) {
    throw new Error(
      `npm ${command} failed (exit code ${result.code}); its output is above.` +
        (command === 'ci'
          ? ' If package.json and package-lock.json disagree, run `npm install` once and commit the lockfile.'
          : ''),
    );
  }
  // npm install may have written a fresh lockfile: record the one on disk now.
  const after = depsState(root);
  const stamp = {
    lockHash: after.lockHash,
    manifestHash: after.manifestHash,
    node: process.version,
    at: new Date().toISOString(),
  };
  mkdirSync(join(root, 'node_modules'), { recursive: true });
  writeFileSync(join(root, 'node_modules', STAMP_FILE), `${JSON.stringify(stamp, null, 2)}\n`);
  const elapsedMs = Math.round(performance.now() - started);
  log(`npm ${command} done in ${(elapsedMs / 1000).toFixed(1)} s`);
  return { installed: true, command, reason: state.reason, elapsedMs };
}

if (isMain(import.meta.url)) {
  const log = prefixedLog('deps');
  const checkOnly = process.argv.includes('--check');
  Promise.resolve()
    .then(async () => {
      if (checkOnly) {
        const { reason } = depsState();
        log(reason === undefined ? 'npm packages are up to date' : `an install is needed: ${reason}`);
        if (reason !== undefined) process.exitCode = 3;
        return;
      }
      const result = await ensureDeps({ log });
      if (!result.installed) log('npm packages are up to date');
    })
    .catch((error) => {
      process.stderr.write(`ensure-deps: ${error instanceof Error ? error.message : String(error)}\n`);
      process.exitCode = 1;
    });
}
