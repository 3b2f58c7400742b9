/**
 * A mic pair whose true spacing is 0.23 m while its file says 0.20 m, with channel 1 late by
 * 20 us (converter skew). The takes are made by numpy (make_takes.py: far-field delays
 * t_i = -p_i . u / c applied exactly as a linear phase, the DFT shift theorem), independently
 * of bearline. The far-field pair delay D sin(theta) / c is the textbook relation
 * (references.md, "Far-field pair").
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadGeometryFile } from '../../src/geometry/geometry-file.js';
import { norm, sub } from '../../src/geometry/vec3.js';
import { runCli } from '../helpers/cli.js';
import { sox } from '../helpers/sox.js';
import { tempDir } from '../helpers/temp-dir.js';
import { numpyTakes, takeArgs, type MadeTake } from './bench-helpers.js';

const TRUE_D = 0.23;
const SKEW_S = 20e-6;
const AZ = [-75, -50, -25, 0, 25, 50, 75];

describe('check-array on a pair: 0.23 m true, 0.20 m in the file, 20 us skew (numpy takes)', () => {
  const tmp = tempDir('bearline-check-pair-');
  let takes: MadeTake[];
  beforeAll(() => {
    takes = numpyTakes(tmp.dir, 'pair', { rate: 48000, duration_s: 2, positions_m: [[-TRUE_D / 2, 0, 0], [TRUE_D / 2, 0, 0]], skew_s: [0, SKEW_S] }, AZ.map((az) => ({ az })));
  });
  afterAll(() => tmp.cleanup());

  it('fits the spacing within 2 mm and the skew within 3 us, and writes the corrected geometry', () => {
    const json = join(tmp.dir, 'pair.json');
    const geo = join(tmp.dir, 'pair-fixed.json');
    const svg = join(tmp.dir, 'pair.svg');
    const r = runCli(['check-array', '--spacing', '0.2', ...takeArgs(takes), '--json', json, '--write-geometry', geo, '--report', svg]);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const out = JSON.parse(readFileSync(json, 'utf8'));
    expect(Math.abs(out.spacing_m - TRUE_D)).toBeLessThan(0.002);
    expect(Math.abs(out.offset_s[1] - SKEW_S)).toBeLessThan(3e-6);
    expect(out.offset_s[0]).toBe(0);
    expect(out.channels_swapped).toBe(false);
    expect(out.polarity_inverted).toEqual([false, false]);
    // The file's 0.20 m fails the default 3 mm tolerance; the skew fails the 10 us one.
    expect(out.verdict).toBe('fail');
    expect(out.checks.find((c: { item: string }) => c.item === 'spacing').status).toBe('fail');
    expect(out.checks.find((c: { item: string }) => c.item === 'offset ch1').status).toBe('fail');
    // After the fit the directions agree to well under a degree; with the file's spacing they do not.
    expect(out.residual_deg_rms).toBeLessThan(0.2);
    expect(out.residual_before_deg_rms).toBeGreaterThan(3);
    expect(r.stdout).toMatch(/spacing\s+30\.\d\d/);
    // The corrected geometry loads as a geometry file and holds the fitted spacing.
    const g = loadGeometryFile(geo);
    expect(Math.abs(norm(sub(g.mics[1]!.position, g.mics[0]!.position)) - TRUE_D)).toBeLessThan(0.002);
    const plot = readFileSync(svg, 'utf8');
    expect(plot).toMatch(/^<svg /);
    expect((plot.match(/<circle [^>]*fill="#1060c0"/g) ?? []).length).toBe(AZ.length);
  });

  it('gives the same fit from one long recording with a span list', () => {
    // sox joins the takes end to end; the span list names each take's stretch and direction.
    const long = join(tmp.dir, 'long.wav');
    sox([...takes.map((t) => t.path), long]);
    const lines = ['# from_s to_s azimuth_deg', ...AZ.map((az, i) => `${i * 2 + 0.1} ${i * 2 + 1.9} ${az}`)];
    const spans = join(tmp.dir, 'long.spans');
    writeFileSync(spans, lines.join('\n') + '\n');
    const json = join(tmp.dir, 'long.json');
    const r = runCli(['check-array', '--spacing', '0.2', '--spans', spans, long, '--json', json]);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    const out = JSON.parse(readFileSync(json, 'utf8'));
    expect(Math.abs(out.spacing_m - TRUE_D)).toBeLessThan(0.002);
    expect(Math.abs(out.offset_s[1] - SKEW_S)).toBeLessThan(3e-6);
    expect(out.takes).toHaveLength(AZ.length);
  });

  it('passes the same takes against a file that says 0.23 m when the skew is allowed', () => {
    const json = join(tmp.dir, 'ok.json');
    const r = runCli(['check-array', '--spacing', '0.23', ...takeArgs(takes), '--json', json, '--tol-offset', '25e-6']);
    expect(r.status).toBe(0);
    const out = JSON.parse(readFileSync(json, 'utf8'));
    expect(out.checks.find((c: { item: string }) => c.item === 'spacing').status).toBe('pass');
    // No drift is measured from 2 s takes, so it is "not measured", which does not spoil a pass.
    expect(out.drift_ppm).toBeNull();
    expect(out.verdict).toBe('pass');
  });
});
