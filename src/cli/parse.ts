import { InvalidArgumentError } from 'commander';

/** commander argument parsers: a bad value becomes a clear usage error naming the option. */
export function finiteNumber(value: string): number {
  const n = Number(value);
  if (value.trim() === '' || !Number.isFinite(n)) throw new InvalidArgumentError(`'${value}' is not a number.`);
  return n;
}

export function positiveNumber(value: string): number {
  const n = finiteNumber(value);
  if (n <= 0) throw new InvalidArgumentError(`'${value}' must be greater than zero.`);
  return n;
}

export function positiveInteger(value: string): number {
  const n = finiteNumber(value);
  if (!Number.isInteger(n) || n <= 0) throw new InvalidArgumentError(`'${value}' must be a whole number greater than zero.`);
  return n;
}
