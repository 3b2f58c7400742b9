/**
 * The one way to declare an option (src/options/option-spec.ts): parsing and checking per
 * type, the defaults shown, and every command's options built from specs without a clash.
 */
import { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { registerAccuracy } from '../../src/cli/accuracy.js';
import { registerCheckArray } from '../../src/cli/check-array.js';
import { registerDemo } from '../../src/cli/demo.js';
import { registerListen } from '../../src/cli/listen.js';
import { registerLocate } from '../../src/cli/locate.js';
import { registerScan } from '../../src/cli/scan.js';
import { registerSimulate } from '../../src/cli/simulate.js';
import { registerStimulus } from '../../src/cli/stimulus.js';
import {
  checkGivenOptions,
  checkOptionValue,
  choiceOption,
  defaultText,
  flagOption,
  formatSize,
  numberOption,
  parseOptionText,
  resolveWithSpecs,
  sizeOption,
  textOption,
  usageOf,
} from '../../src/options/option-spec.js';
import { UsageError } from '../../src/util/errors.js';

const gate = numberOption('gateSigma', 'gate', 'sigma', 3.5, { min: 1, max: 10, unit: 'sigma' }, 'gate');
const count = numberOption('n', 'count', 'n', null, { min: 0, max: 9, integer: true }, 'count', { none: 'never' });
const noise = numberOption('noise', 'noise', 'deg', 3, { min: 0, max: 45, minExclusive: true, unit: 'deg' }, 'noise');
const size = sizeOption('rotate', 'rotate-size', 64 * 1024 ** 2, 4096, 'rotate');
const format = choiceOption('format', 'format', ['jsonl', 'csv'], 'jsonl', 'format');
const host = textOption('host', 'host', 'address', '127.0.0.1', 'host', { check: (h) => (h.includes(' ') ? 'holds a space' : null) });
const token = textOption('token', 'token', 'text', null, 'token', { check: (t) => (t.length < 8 ? 'is too short' : null), secret: true });
const voting = flagOption('voting', 'no-voting', true, 'no voting');

describe('option specs: parse, check, describe', () => {
  it('numbers: ranges, whole numbers, an excluded minimum and a word for none', () => {
    expect(parseOptionText(gate, ' 4.5 ')).toBe(4.5);
    expect(() => parseOptionText(gate, '11')).toThrow(/^--gate: 11 is out of range; give a number from 1 to 10 sigma\.$/);
    expect(() => parseOptionText(gate, '4,5')).toThrow(/--gate: '4,5' is not a number/);
    expect(() => parseOptionText(gate, '')).toThrow(UsageError);
    expect(parseOptionText(count, 'never')).toBeNull();
    expect(() => parseOptionText(count, '2.5')).toThrow(/give a whole number from 0 to 9, or 'never'/);
    expect(() => checkOptionValue(noise, 0)).toThrow(/--noise: 0 is out of range; give a number above 0 and at most 45 deg/);
    expect(checkOptionValue(noise, 45)).toBe(45);
    expect(() => checkOptionValue(gate, null)).toThrow(/--gate: null is not allowed/);
    expect(() => checkOptionValue(gate, Number.POSITIVE_INFINITY)).toThrow(/out of range/);
  });

  it('sizes in powers of 1024 (common practice, no source), choices, text with a check, secrets, switches', () => {
    expect(parseOptionText(size, '32M')).toBe(32 * 1024 ** 2);
    expect(() => parseOptionText(size, '1K')).toThrow(/--rotate-size: 1K is too small; give a size like 500M, 2G or 65536, at least 4K/);
    expect(() => parseOptionText(size, 'lots')).toThrow(/'lots' is not a size/);
    expect(formatSize(64 * 1024 ** 2)).toBe('64M');
    expect(formatSize(1536)).toBe('1536');
    expect(formatSize(4 * 1024 ** 3)).toBe('4G');
    expect(parseOptionText(format, 'csv')).toBe('csv');
    expect(() => parseOptionText(format, 'xml')).toThrow(/--format: 'xml' is not known; give one of jsonl, csv/);
    expect(() => parseOptionText(host, 'a b')).toThrow(/--host: 'a b' holds a space/);
    expect(() => parseOptionText(host, '  ')).toThrow(/is empty/);
    const secret = (() => {
      try {
        parseOptionText(token, 'hunter');
      } catch (err) {
        return (err as Error).message;
      }
      return '';
    })();
    expect(secret).toMatch(/--token: the value is too short/);
    expect(secret).not.toContain('hunter');
    expect(parseOptionText(voting, 'true')).toBe(true);
    expect(() => checkOptionValue(voting, 'yes')).toThrow(/--no-voting: 'yes' is not true or false/);
  });

  it('shows usage and defaults as --help and the README do', () => {
    expect([gate, count, size, format, token, voting].map(usageOf)).toEqual(['--gate <sigma>', '--count <n>', '--rotate-size <size>', '--format <jsonl|csv>', '--token <text>', '--no-voting']);
    expect([gate, count, size, format, token, voting].map(defaultText)).toEqual(['3.5', 'never', '64M', 'jsonl', 'none', 'off']);
  });

  it('resolves defaults under the stage keys, checks what is given and refuses unknown keys', () => {
    const specs = [gate, size, format];
    expect(resolveWithSpecs<{ gateSigma: number; rotate: number; format: string }>(specs, { gateSigma: 5 }, 'x')).toEqual({ gateSigma: 5, rotate: 64 * 1024 ** 2, format: 'jsonl' });
    expect(() => checkGivenOptions(specs, { gatesigma: 5 }, 'tracker')).toThrow(/tracker: unknown option 'gatesigma'; known options are gateSigma, rotate, format/);
    expect(checkGivenOptions(specs, { gateSigma: undefined, mirror: 1 }, 'x', ['mirror'])).toEqual({});
  });
});

describe('every command builds its options from specs', () => {
  it('no command declares an option twice (commander refuses a clash), and every value option shows its default', () => {
    const program = new Command();
    for (const register of [registerScan, registerListen, registerLocate, registerSimulate, registerCheckArray, registerStimulus, registerAccuracy, registerDemo]) register(program);
    expect(program.commands.length).toBe(8);
    for (const cmd of program.commands) {
      const flags = cmd.options.map((o) => o.long);
      expect(new Set(flags).size, cmd.name()).toBe(flags.length);
      for (const o of cmd.options) {
        if (o.required) expect(o.description, `${cmd.name()} ${o.long}`).toContain('(default: ');
      }
    }
  });
});
