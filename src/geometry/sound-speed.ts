import { numberOption, type OptionSpec } from '../options/option-spec.js';
import { UsageError } from '../util/errors.js';

/** Default speed of sound, m/s (interface.md). */
export const DEFAULT_SPEED_OF_SOUND = 343;

/** Speed of sound in dry air for a temperature in degrees Celsius: c = 331.3 sqrt(1 + T/273.15). */
export function speedOfSoundAt(temperatureC: number): number {
  if (!Number.isFinite(temperatureC) || temperatureC < -100 || temperatureC > 100) {
    throw new UsageError(
      `temperature ${temperatureC} C is out of range: give an air temperature between -100 and 100 degrees Celsius`,
    );
  }
  return 331.3 * Math.sqrt(1 + temperatureC / 273.15);
}

export interface SoundSpeedOptions {
  temperature?: number;
  speedOfSound?: number;
}

/** The two ways a user sets the speed of sound (every command that needs it takes both). */
export const soundSpeedOptionSpecs: readonly OptionSpec<keyof SoundSpeedOptions>[] = [
  numberOption('temperature', 'temperature', 'celsius', null, { min: -100, max: 100, unit: 'degrees Celsius' }, 'air temperature; sets the speed of sound c = 331.3 sqrt(1 + T/273.15)', { defaultText: 'none' }),
  numberOption('speedOfSound', 'speed-of-sound', 'm/s', null, { min: 200, max: 2000, unit: 'm/s' }, 'speed of sound directly', { defaultText: `${DEFAULT_SPEED_OF_SOUND} m/s` }),
];

/**
 * Resolve the speed of sound from the user's options: --speed-of-sound wins over
 * --temperature; neither gives the default 343 m/s. Both at once is a usage error.
 */
export function resolveSpeedOfSound(opts: SoundSpeedOptions): number {
  if (opts.speedOfSound !== undefined && opts.temperature !== undefined) {
    throw new UsageError('give either --speed-of-sound or --temperature, not both');
  }
  if (opts.speedOfSound !== undefined) {
    const c = opts.speedOfSound;
    if (!Number.isFinite(c) || c < 200 || c > 2000) {
      throw new UsageError(`--speed-of-sound ${c} m/s is out of range: give a value between 200 and 2000 m/s`);
    }
    return c;
  }
  if (opts.temperature !== undefined) return speedOfSoundAt(opts.temperature);
  return DEFAULT_SPEED_OF_SOUND;
}
