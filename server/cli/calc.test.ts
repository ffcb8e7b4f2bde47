import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { calibrationResultSchema } from '#shared/schemas/calibration-result';
import { exampleCaptureCsv, exampleMeasurement, exampleRecipe } from '#shared/simulation/examples';

const dir = mkdtempSync(join(tmpdir(), 'calc-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const write = (name: string, content: unknown) => {
  const path = join(dir, name);
  writeFileSync(path, typeof content === 'string' ? content : JSON.stringify(content));
  return path;
};

function calc(...args: string[]) {
  const r = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/calc.ts', ...args], {
    cwd: join(import.meta.dirname, '../..'),
    encoding: 'utf8',
    timeout: 60_000,
  });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

const recipe = write('recipe.json', exampleRecipe());

// Each case starts a process; on a busy machine that takes seconds.
describe('calc command line', { timeout: 120_000 }, () => {
  it('prints the result JSON and exits 0 for a measurement', () => {
    const out = calc('--recipe', recipe, write('m.json', exampleMeasurement()));
    expect(out.stderr).toBe('');
    expect(out.code).toBe(0);
    const result = calibrationResultSchema.parse(JSON.parse(out.stdout));
    expect(result.verdict).toBe('pass');
    expect(result.lagDeg).not.toBeNull();
  });

  it('prints a table, and exits 0 for a failing unit too', () => {
    const strict = write('strict.json', {
      ...exampleRecipe(),
      limits: { ...exampleRecipe().limits, offsetDeg: [-1, 1] },
    });
    const out = calc('--recipe', strict, write('m2.json', exampleMeasurement()), '--format', 'table');
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/Verdict: FAIL/);
    expect(out.stdout).toMatch(/FAIL offset\.within_limits/);
  });

  it('calibrates a sampled CSV capture end to end', () => {
    const out = calc('--recipe', recipe, write('c.csv', exampleCaptureCsv()), '--serial', 'SN-9');
    expect(out.code).toBe(0);
    const result = calibrationResultSchema.parse(JSON.parse(out.stdout));
    expect(result.serial).toBe('SN-9');
    expect(result.capture?.keVPerKrpmPeak).toBeCloseTo(6.1, 1);
    expect(result.offsetDeg).toBeCloseTo(4.2 + (0.3 - 0.5 + 0.1) / 3, 1);
  });

  it('exits 2 with every problem and its path on stderr for unusable input', () => {
    const bad = exampleMeasurement();
    bad.segments[0].hallEdges[3].us = -5;
    (bad.segments[0].bemfCrossings[0] as { channel: string }).channel = 'Z';
    const { polePairs: _drop, ...noPolePairs } = exampleRecipe();
    const out = calc('--recipe', write('r-bad.json', noPolePairs), write('bad.json', bad));
    expect(out.code).toBe(2);
    expect(out.stdout).toBe('');
    expect(out.stderr).toMatch(/measurement\.segments\[0\]\.hallEdges\[3\]\.us/);
    expect(out.stderr).toMatch(/measurement\.segments\[0\]\.bemfCrossings\[0\]\.channel/);
    expect(out.stderr).toMatch(/recipe\.polePairs/);
  });

  it('exits 2 with a readable message for a missing file, bad JSON, a bad CSV or a bad option', () => {
    expect(calc('--recipe', join(dir, 'nope.json'), recipe).stderr).toMatch(/no such file/);
    const notJson = calc('--recipe', write('broken.json', '{"polePairs":'), recipe);
    expect(notJson.code).toBe(2);
    expect(notJson.stderr).toMatch(/not valid JSON/);
    const csv = calc('--recipe', recipe, write('bad.csv', 'time_s,va,vb,vc\n0,1,2,3\n'));
    expect(csv.code).toBe(2);
    expect(csv.stderr).toMatch(/ha, hb, hc/);
    const opt = calc('--recipe', recipe, '--format', 'xml', recipe);
    expect(opt.code).toBe(2);
    expect(opt.stderr).toMatch(/--format must be json or table/);
  });
});
