// @ts-check
// Finds the browser the browser tests drive: CHROMIUM_PATH when set, else Debian's chromium, which
// is installed with apt-get when missing and we are root. No browser is ever downloaded by a test tool.
//
//   node server/ops/ensure-chromium.mjs     (prints the path)
import { accessSync, constants, existsSync, statSync } from 'node:fs';
import { aptInstall, isMain, isRoot, prefixedLog } from './proc.mjs';

const CANDIDATES = ['/usr/bin/chromium', '/usr/bin/chromium-browser'];

/** @param {string} path */
function isExecutableFile(path) {
  try {
    accessSync(path, constants.X_OK);
    return statSync(path).isFile();
  } catch {
    return false;
  }
}

/** @returns {string | undefined} */
function findInstalled() {
  return CANDIDATES.find((path) => existsSync(path) && isExecutableFile(path));
}

/**
 * @param {{ log?: import('./proc.mjs').Log, env?: NodeJS.ProcessEnv }} [options]
 * @returns {Promise<string>} the absolute path of the chromium executable
 */
export async function ensureChromium({ log = prefixedLog('chromium'), env = process.env } = {}) {
  if (env.CHROMIUM_PATH) {
    if (!isExecutableFile(env.CHROMIUM_PATH)) {
      throw new Error(`CHROMIUM_PATH=${env.CHROMIUM_PATH} is not an executable file.`);
    }
    return env.CHROMIUM_PATH;
  }
  const installed = findInstalled();
  if (installed) return installed;
  if (!isRoot()) {
    throw new Error(
      'Chromium was not found at /usr/bin/chromium. The browser tests need it.\n' +
        'Install it (Debian): sudo apt-get install chromium\n' +
        'or run this command as root to have it installed, or set CHROMIUM_PATH to a Chromium executable.',
    );
  }
  log('Chromium is not installed: installing the Debian package "chromium" (about 70 s).');
  await aptInstall(['chromium'], { log });
  const afterInstall = findInstalled();
  if (!afterInstall) throw new Error('apt-get installed "chromium" but /usr/bin/chromium is still missing.');
  return afterInstall;
}

if (isMain(import.meta.url)) {
  ensureChromium().then(
    (path) => process.stdout.write(`${path}\n`),
    (error) => {
      process.stderr.write(`ensure-chromium: ${error instanceof Error ? error.message : String(error)}\n`);
      process.exitCode = 1;
    },
  );
}
