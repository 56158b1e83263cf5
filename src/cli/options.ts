/**
 * Parsers for option values, each raising InputError that names the option.
 */
import { InputError } from '../core/errors';

export function parseNumber(option: string, text: string, range?: { min?: number; max?: number; exclusiveMin?: boolean }): number {
  const value = Number(text);
  if (text.trim() === '' || !Number.isFinite(value)) throw new InputError(`expected a number, got '${text}'`, { key: option });
  if (range?.min !== undefined && (range.exclusiveMin ? value <= range.min : value < range.min)) {
    throw new InputError(`must be ${range.exclusiveMin ? 'greater than' : 'at least'} ${range.min}, got ${value}`, { key: option });
  }
  if (range?.max !== undefined && value > range.max) throw new InputError(`must be at most ${range.max}, got ${value}`, { key: option });
  return value;
}

/** "3:14" -> [3, 14], with min < max. */
export function parseRange(option: string, text: string): [number, number] {
  const parts = text.split(':');
  if (parts.length !== 2) throw new InputError(`expected MIN:MAX, got '${text}'`, { key: option });
  const lo = parseNumber(option, parts[0]);
  const hi = parseNumber(option, parts[1]);
  if (!(lo < hi)) throw new InputError(`the range must increase, got ${lo}:${hi}`, { key: option });
  return [lo, hi];
}

export function parseInteger(option: string, text: string, min = 0): number {
  const value = parseNumber(option, text, { min });
  if (!Number.isInteger(value)) throw new InputError(`expected a whole number, got '${text}'`, { key: option });
  return value;
}
