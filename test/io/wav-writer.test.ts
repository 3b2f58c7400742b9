/**
 * The WAV files bearline writes, read back by an independent tool (sox) and by bearline's own
 * reader. Float files carry the 18-byte fmt chunk (cbSize 0) and a fact chunk with the frame
 * count, as the Microsoft WAVE specification asks of formats other than PCM (Multimedia
 * Programming Interface and Data Specifications 1.0, 1991; common practice): sox warned
 * "wave header missing extended part of fmt chunk" on the 16-byte fmt chunk written before.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { wavFileChunks, type WavSampleFormat } from '../../src/sinks/wav-writer.js';
import { openWavSource } from '../../src/sources/wav-source.js';
import { drain } from '../helpers/audio.js';
import { tempDir } from '../helpers/temp-dir.js';

const tmp = tempDir('wav-writer');

function write(name: string, format: WavSampleFormat, channels: number, frames: number): { path: string; signal: Float32Array[] } {
  const signal = Array.from({ length: channels }, (_, c) => Float32Array.from({ length: frames }, (_, i) => 0.5 * Math.sin((2 * Math.PI * (440 + 110 * c) * i) / 48_000)));
  const path = join(tmp.dir, name);
  writeFileSync(path, Buffer.concat([...wavFileChunks(48_000, signal, format)]));
  return { path, signal };
}

describe('WAV files written by bearline', () => {
  it.each([
    ['f32', 4],
    ['f32', 2],
    ['s16', 2],
    ['s24', 4],
  ] as const)('%s with %d channels: sox reads it without a warning, with the right length and channels', (format, channels) => {
    const { path } = write(`${format}-${channels}.wav`, format, channels, 12_345);
    const r = spawnSync('sox', ['-V2', path, '-n', 'stat'], { encoding: 'utf8' });
    expect(r.status).toBe(0);
    expect(r.stderr).not.toMatch(/sox WARN|sox FAIL/);
    const info = spawnSync('soxi', [path], { encoding: 'utf8' }).stdout;
    expect(info).toMatch(new RegExp(`Channels\\s*: ${channels}\\n`));
    expect(info).toMatch(/= 12345 samples/);
    if (format === 'f32') expect(info).toMatch(/Sample Encoding: 32-bit Floating Point PCM/);
  });

  it('the float header: fmt chunk of 18 bytes with cbSize 0, then fact with the frame count', () => {
    const { path } = write('layout.wav', 'f32', 3, 1000);
    const b = readFileSync(path);
    expect(b.toString('ascii', 12, 16)).toBe('fmt ');
    expect(b.readUInt32LE(16)).toBe(18);
    expect(b.readUInt16LE(20)).toBe(3); // WAVE_FORMAT_IEEE_FLOAT
    expect(b.readUInt16LE(36)).toBe(0);
    expect(b.toString('ascii', 38, 42)).toBe('fact');
    expect(b.readUInt32LE(42)).toBe(4);
    expect(b.readUInt32LE(46)).toBe(1000);
    expect(b.toString('ascii', 50, 54)).toBe('data');
    expect(b.readUInt32LE(54)).toBe(1000 * 3 * 4);
    expect(b.readUInt32LE(4)).toBe(b.length - 8);
  });

  it('bearline reads its float file back sample for sample', async () => {
    const { path, signal } = write('back.wav', 'f32', 2, 5000);
    const src = await openWavSource(path);
    const got = (await drain(src)).samples;
    await src.close();
    expect(got.length).toBe(5000 * 2);
    for (let i = 0; i < 5000; i++) {
      expect(got[2 * i]).toBe(signal[0]![i]);
      expect(got[2 * i + 1]).toBe(signal[1]![i]);
    }
  });
});
