/**
 * Reading command-line values: every option goes through one of these, so
 * each bad value gets the same kind of message (the flag, the value, what was
 * expected).
 */
import { InputError } from '../errors.js';
import { metresPer, parseLinearUnit } from '../units.js';

/**
 * A length in metres from text such as "1.2", "1.2 m", "4 ft", "4 us-ft".
 * A bare number is metres.
 */
export function parseLengthM(text: string, flag: string, options: { min?: number; max?: number } = {}): number {
  const match = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:e[-+]?\d+)?)\s*([a-zA-Z_ -]*)\s*$/i.exec(text);
  const unit = match?.[2] ? parseLinearUnit(match[2]) : 'metre';
  if (!match || !unit) {
    throw new InputError(`${flag} "${text}" is not a length; write a number of metres, or add a unit: m, ft, us-ft`);
  }
  const valueM = Number(match[1]) * metresPer(unit);
  checkRange(valueM, flag, text, options);
  return valueM;
}

/** A plain number within an optional range. */
export function parseNumber(text: string, flag: string, options: { min?: number; max?: number; integer?: boolean } = {}): number {
  const value = Number(text);
  if (text.trim() === '' || !Number.isFinite(value) || (options.integer && !Number.isInteger(value))) {
    throw new InputError(`${flag} "${text}" is not ${options.integer ? 'a whole number' : 'a number'}`);
  }
  checkRange(value, flag, text, options);
  return value;
}

function checkRange(value: number, flag: string, text: string, options: { min?: number; max?: number }): void {
  if (options.min !== undefined && value < options.min) {
    throw new InputError(`${flag} "${text}" is below the smallest allowed value, ${options.min}`);
  }
  if (options.max !== undefined && value > options.max) {
    throw new InputError(`${flag} "${text}" is above the largest allowed value, ${options.max}`);
  }
}
