/**
 * Physical quantities in study files.
 *
 * A quantity is written either as a bare number, taken as SI (m, kg, s, rad and
 * their coherent combinations), or as a string "<number> <unit expression>",
 * for example "250 mm", "0.8 N*m", "3000 rpm", "2700 kg/m^3", "5000 N*m/rad".
 * Everything is converted to SI on input; the rest of the program never sees
 * another unit.
 *
 * Number syntax: optional sign, digits with an optional decimal point, optional
 * exponent ("1e5", "2.5E-3", "-.5", "+3."). NaN and Infinity are rejected.
 * The unit may follow the number with or without a space ("250mm", "30°").
 * A string holding only a number ("0.25") is taken as SI, like a YAML number.
 *
 * Unit expressions:
 *   expression  := product [ "/" factor ]
 *   product     := factor { ("*" | "·" | "⋅" | whitespace) factor }
 *   factor      := primary [ "^" [+|-] integer | superscript integer ("²", "³", "⁻¹") ]
 *   primary     := unit symbol | "1" (only directly before "/", as in "1/s") | "(" expression ")"
 * At most one "/" per (parenthesised) level and only one factor after it, so
 * "kg/m/s" and "kg/m*s" are rejected as ambiguous; write "kg/(m*s)".
 * Prefixes bind to their symbol before the power: "mm^2" is (mm)^2.
 *
 * Dimensions are tracked as integer exponents of (length, mass, time, angle).
 * Angle is a dimension of its own, so "N*m/rad" is a rotational stiffness and
 * "N*m" a torque, "rpm" and "rad/s" are angular speeds while "Hz" and "1/s" are
 * frequencies. The joule has the dimensions of N*m and is accepted as a torque.
 *
 * Exactness: every unit factor is kept as an exact rational times a power of
 * ten times a power of pi (pi carried to 40 decimals), and the conversion of
 * "<number> <unit>" to a double is correctly rounded, so "250 mm" is exactly
 * 0.25, "1 mg" exactly 1e-6 and "180 deg" exactly Math.PI. Defined factors:
 * in = 0.0254 m, ft = 0.3048 m, lb = 0.45359237 kg, lbf = 4.4482216152605 N
 * (lb times standard gravity 9.80665 m/s^2), deg = pi/180 rad, rev = 2 pi rad,
 * min = 60 s, h = 3600 s, rpm = rev/min.
 *
 * Display units (see displayUnit): length mm, mass kg, time s, angle deg,
 * angular speed rpm (motor data sheets give speeds in rpm), torque N*m,
 * modulus GPa, area m^2 (workspace areas are fractions of a square metre),
 * second moment of area mm^4 (section property), all other kinds their
 * coherent SI unit. formatQuantity prints significant digits, in plain
 * notation for display values with 1e-3 <= |x| < 1e4 and in engineering
 * notation (exponent a multiple of 3, e.g. "125e3 N/m") outside that range.
 */

export type { QuantityKind } from '../core/quantities.js';
export { QUANTITY_KINDS } from '../core/quantities.js';
import { LoopsmithUserError } from '../core/errors.js';
import { QUANTITY_KINDS, type QuantityKind } from '../core/quantities.js';

/** Thrown for any quantity that cannot be read; the message names the field. */
export class UnitError extends LoopsmithUserError {
  constructor(message: string) {
    super(message);
    this.name = 'UnitError';
  }
}

// ---------------------------------------------------------------------------
// Dimensions and exact factors
// ---------------------------------------------------------------------------

/** Integer exponents of length (m), mass (kg), time (s) and angle (rad). */
type Dimensions = readonly [length: number, mass: number, time: number, angle: number];

const DIMENSIONLESS: Dimensions = [0, 0, 0, 0];

/**
 * An exact unit factor: SI value of one unit = numerator / denominator
 * * 10^powerOfTen * pi^powerOfPi, with the unit's dimensions.
 */
interface ExactFactor {
  readonly numerator: bigint; // > 0
  readonly denominator: bigint; // > 0
  readonly powerOfTen: number;
  readonly powerOfPi: number;
  readonly dimensions: Dimensions;
}

function greatestCommonDivisor(a: bigint, b: bigint): bigint {
  let x = a < 0n ? -a : a;
  let y = b < 0n ? -b : b;
  while (y !== 0n) {
    const remainder = x % y;
    x = y;
    y = remainder;
  }
  return x;
}

function makeFactor(
  numerator: bigint,
  denominator: bigint,
  powerOfTen: number,
  powerOfPi: number,
  dimensions: Dimensions,
): ExactFactor {
  const divisor = greatestCommonDivisor(numerator, denominator);
  return {
    numerator: numerator / divisor,
    denominator: denominator / divisor,
    powerOfTen,
    powerOfPi,
    dimensions,
  };
}

const UNIT_ONE: ExactFactor = makeFactor(1n, 1n, 0, 0, DIMENSIONLESS);

function addDimensions(a: Dimensions, b: Dimensions, bScale: number): Dimensions {
  return [a[0] + bScale * b[0], a[1] + bScale * b[1], a[2] + bScale * b[2], a[3] + bScale * b[3]];
}

function multiplyFactors(a: ExactFactor, b: ExactFactor): ExactFactor {
  return makeFactor(
    a.numerator * b.numerator,
    a.denominator * b.denominator,
    a.powerOfTen + b.powerOfTen,
    a.powerOfPi + b.powerOfPi,
    addDimensions(a.dimensions, b.dimensions, 1),
  );
}

function divideFactors(a: ExactFactor, b: ExactFactor): ExactFactor {
  return makeFactor(
    a.numerator * b.denominator,
    a.denominator * b.numerator,
    a.powerOfTen - b.powerOfTen,
    a.powerOfPi - b.powerOfPi,
    addDimensions(a.dimensions, b.dimensions, -1),
  );
}

function raiseFactor(base: ExactFactor, exponent: number): ExactFactor {
  if (exponent === 0) return UNIT_ONE;
  const magnitude = BigInt(Math.abs(exponent));
  const numerator = base.numerator ** magnitude;
  const denominator = base.denominator ** magnitude;
  return makeFactor(
    exponent > 0 ? numerator : denominator,
    exponent > 0 ? denominator : numerator,
    base.powerOfTen * exponent,
    base.powerOfPi * exponent,
    [
      base.dimensions[0] * exponent,
      base.dimensions[1] * exponent,
      base.dimensions[2] * exponent,
      base.dimensions[3] * exponent,
    ],
  );
}

function sameDimensions(a: Dimensions, b: Dimensions): boolean {
  return a[0] === b[0] && a[1] === b[1] && a[2] === b[2] && a[3] === b[3];
}

/** pi * 10^40, rounded to the nearest integer. */
const PI_TIMES_TEN_TO_40 = 31415926535897932384626433832795028841972n;
const PI_DECIMALS = 40;
/** Decimal digits kept beyond the leading ones before the final rounding. */
const GUARD_DIGITS = 40;

/**
 * Correctly rounded double of mantissa * 10^decimalExponent * factor
 * (the factor's pi taken to 40 decimals).
 */
function exactToDouble(mantissa: bigint, decimalExponent: number, factor: ExactFactor): number {
  let numerator = mantissa * factor.numerator;
  let denominator = factor.denominator;
  let exponent = decimalExponent + factor.powerOfTen;
  if (factor.powerOfPi > 0) {
    numerator *= PI_TIMES_TEN_TO_40 ** BigInt(factor.powerOfPi);
    exponent -= PI_DECIMALS * factor.powerOfPi;
  } else if (factor.powerOfPi < 0) {
    denominator *= PI_TIMES_TEN_TO_40 ** BigInt(-factor.powerOfPi);
    exponent += PI_DECIMALS * -factor.powerOfPi;
  }
  if (numerator === 0n) return 0;
  const negative = numerator < 0n;
  const absoluteNumerator = negative ? -numerator : numerator;
  const extraDigits = Math.max(
    0,
    GUARD_DIGITS - (absoluteNumerator.toString().length - denominator.toString().length),
  );
  const scaled = absoluteNumerator * 10n ** BigInt(extraDigits);
  let quotient = scaled / denominator;
  let quotientExponent = exponent - extraDigits;
  if (scaled % denominator !== 0n) {
    // Sticky digit: an inexact quotient never looks like an exact halfway case.
    quotient = quotient * 10n + 1n;
    quotientExponent -= 1;
  }
  return Number.parseFloat(`${negative ? '-' : ''}${quotient.toString()}e${quotientExponent}`);
}

// ---------------------------------------------------------------------------
// Unit symbols
// ---------------------------------------------------------------------------

const LENGTH: Dimensions = [1, 0, 0, 0];
const MASS: Dimensions = [0, 1, 0, 0];
const TIME: Dimensions = [0, 0, 1, 0];
const ANGLE: Dimensions = [0, 0, 0, 1];
const FORCE: Dimensions = [1, 1, -2, 0];
const ENERGY: Dimensions = [2, 1, -2, 0];

/** Decimal power of each SI prefix that we accept. */
const PREFIX_POWERS: ReadonlyMap<string, number> = new Map([
  ['G', 9],
  ['M', 6],
  ['k', 3],
  ['c', -2],
  ['m', -3],
  ['u', -6],
  ['\u00B5', -6], // µ micro sign
  ['\u03BC', -6], // μ Greek small letter mu
  ['n', -9],
]);

const MICRO = ['u', '\u00B5', '\u03BC'];

interface UnitSymbol {
  readonly factor: ExactFactor;
  /** Prefixes this symbol may carry ("k" for "kN", ...). */
  readonly prefixes: readonly string[];
}

function unit(
  numerator: bigint,
  denominator: bigint,
  powerOfTen: number,
  powerOfPi: number,
  dimensions: Dimensions,
  prefixes: readonly string[] = [],
): UnitSymbol {
  return { factor: makeFactor(numerator, denominator, powerOfTen, powerOfPi, dimensions), prefixes };
}

const UNIT_SYMBOLS: ReadonlyMap<string, UnitSymbol> = new Map<string, UnitSymbol>([
  ['m', unit(1n, 1n, 0, 0, LENGTH, ['k', 'c', 'm', ...MICRO, 'n'])],
  ['g', unit(1n, 1n, -3, 0, MASS, ['k', 'm', ...MICRO])],
  ['s', unit(1n, 1n, 0, 0, TIME, ['m', ...MICRO, 'n'])],
  ['min', unit(60n, 1n, 0, 0, TIME)],
  ['h', unit(3600n, 1n, 0, 0, TIME)],
  ['N', unit(1n, 1n, 0, 0, FORCE, ['k', 'M', 'm', ...MICRO])],
  ['Nm', unit(1n, 1n, 0, 0, ENERGY, ['k', 'm', ...MICRO])],
  ['Pa', unit(1n, 1n, 0, 0, [-1, 1, -2, 0], ['k', 'M', 'G'])],
  ['J', unit(1n, 1n, 0, 0, ENERGY, ['k', 'M', 'm'])],
  ['W', unit(1n, 1n, 0, 0, [2, 1, -3, 0], ['k', 'M', 'm'])],
  ['Hz', unit(1n, 1n, 0, 0, [0, 0, -1, 0], ['k', 'M', 'G'])],
  ['rad', unit(1n, 1n, 0, 0, ANGLE, ['m', ...MICRO])],
  ['deg', unit(1n, 180n, 0, 1, ANGLE)],
  ['\u00B0', unit(1n, 180n, 0, 1, ANGLE)], // °
  ['rev', unit(2n, 1n, 0, 1, ANGLE)],
  ['rpm', unit(2n, 60n, 0, 1, [0, 0, -1, 1])],
  ['in', unit(254n, 1n, -4, 0, LENGTH)],
  ['ft', unit(3048n, 1n, -4, 0, LENGTH)],
  ['lb', unit(45359237n, 1n, -8, 0, MASS)],
  ['lbf', unit(44482216152605n, 1n, -13, 0, FORCE)],
]);

/** Symbols listed in the message for an unknown unit. */
const SAMPLE_SYMBOLS =
  'm, mm, cm, km, um, in, ft, kg, g, lb, s, ms, min, h, rad, deg, rev, rpm, Hz, N, kN, lbf, N*m, Nm, Pa, kPa, MPa, GPa, J, W';

function lookUpSymbol(symbol: string): ExactFactor | undefined {
  const direct = UNIT_SYMBOLS.get(symbol);
  if (direct !== undefined) return direct.factor;
  for (const [prefix, power] of PREFIX_POWERS) {
    if (!symbol.startsWith(prefix)) continue;
    const base = UNIT_SYMBOLS.get(symbol.slice(prefix.length));
    if (base !== undefined && base.prefixes.includes(prefix)) {
      const f = base.factor;
      return makeFactor(f.numerator, f.denominator, f.powerOfTen + power, f.powerOfPi, f.dimensions);
    }
  }
  return undefined;
}

/** A known symbol that differs from `symbol` only in letter case, if any. */
function suggestSymbol(symbol: string): string | undefined {
  const lower = symbol.toLowerCase();
  const candidates = SAMPLE_SYMBOLS.split(', ');
  return candidates.find((candidate) => candidate.toLowerCase() === lower);
}

// ---------------------------------------------------------------------------
// Tokenizer and parser for unit expressions
// ---------------------------------------------------------------------------

/** Why a string could not be read; turned into a UnitError by parseQuantity. */
class QuantitySyntaxFailure extends Error {
  constructor(
    readonly detail: string,
    readonly unknownSymbol?: string,
  ) {
    super(detail);
    this.name = 'QuantitySyntaxFailure';
  }
}

type Token =
  | { readonly type: 'symbol'; readonly text: string }
  | { readonly type: 'integer'; readonly text: string }
  | { readonly type: 'superscript'; readonly value: number; readonly text: string }
  | { readonly type: 'times' | 'over' | 'caret' | 'open' | 'close' | 'plus' | 'minus'; readonly text: string };

const SYMBOL_CHARACTER = /[A-Za-z\u00B5\u03BC\u00B0]/;
const SUPERSCRIPT_DIGITS: ReadonlyMap<string, number> = new Map([
  ['\u2070', 0],
  ['\u00B9', 1],
  ['\u00B2', 2],
  ['\u00B3', 3],
  ['\u2074', 4],
  ['\u2075', 5],
  ['\u2076', 6],
  ['\u2077', 7],
  ['\u2078', 8],
  ['\u2079', 9],
]);
const SUPERSCRIPT_MINUS = '\u207B';
const SUPERSCRIPT_PLUS = '\u207A';
const PRODUCT_SIGNS = new Set(['*', '\u00B7', '\u22C5']); // * · ⋅

function tokenize(text: string): Token[] {
  const tokens: Token[] = [];
  let index = 0;
  while (index < text.length) {
    const character = text.charAt(index);
    if (/\s/.test(character)) {
      index += 1;
    } else if (SYMBOL_CHARACTER.test(character)) {
      let end = index + 1;
      while (end < text.length && SYMBOL_CHARACTER.test(text.charAt(end))) end += 1;
      tokens.push({ type: 'symbol', text: text.slice(index, end) });
      index = end;
    } else if (/\d/.test(character)) {
      let end = index + 1;
      while (end < text.length && /\d/.test(text.charAt(end))) end += 1;
      tokens.push({ type: 'integer', text: text.slice(index, end) });
      index = end;
    } else if (
      SUPERSCRIPT_DIGITS.has(character) ||
      character === SUPERSCRIPT_MINUS ||
      character === SUPERSCRIPT_PLUS
    ) {
      let end = index;
      let sign = 1;
      if (character === SUPERSCRIPT_MINUS || character === SUPERSCRIPT_PLUS) {
        sign = character === SUPERSCRIPT_MINUS ? -1 : 1;
        end += 1;
      }
      let value = 0;
      const digitsStart = end;
      while (end < text.length && SUPERSCRIPT_DIGITS.has(text.charAt(end))) {
        value = value * 10 + (SUPERSCRIPT_DIGITS.get(text.charAt(end)) ?? 0);
        end += 1;
      }
      if (end === digitsStart) throw new QuantitySyntaxFailure('a superscript sign needs superscript digits');
      tokens.push({ type: 'superscript', value: sign * value, text: text.slice(index, end) });
      index = end;
    } else if (PRODUCT_SIGNS.has(character)) {
      tokens.push({ type: 'times', text: character });
      index += 1;
    } else if (character === '/') {
      tokens.push({ type: 'over', text: character });
      index += 1;
    } else if (character === '^') {
      tokens.push({ type: 'caret', text: character });
      index += 1;
    } else if (character === '(') {
      tokens.push({ type: 'open', text: character });
      index += 1;
    } else if (character === ')') {
      tokens.push({ type: 'close', text: character });
      index += 1;
    } else if (character === '+') {
      tokens.push({ type: 'plus', text: character });
      index += 1;
    } else if (character === '-') {
      tokens.push({ type: 'minus', text: character });
      index += 1;
    } else {
      throw new QuantitySyntaxFailure(`unexpected character ${JSON.stringify(character)}`);
    }
  }
  return tokens;
}

/** Largest power magnitude accepted ("m^4" is plenty; this keeps exact factors small). */
const MAX_POWER = 12;

class UnitExpressionParser {
  private position = 0;

  constructor(private readonly tokens: readonly Token[]) {}

  parseWhole(): ExactFactor {
    const result = this.parseExpression();
    const next = this.peek();
    if (next !== undefined) {
      if (next.type === 'close') throw new QuantitySyntaxFailure('unmatched ")"');
      throw new QuantitySyntaxFailure(`unexpected ${JSON.stringify(next.text)}`);
    }
    return result;
  }

  private peek(offset = 0): Token | undefined {
    return this.tokens[this.position + offset];
  }

  private startsFactor(token: Token | undefined): boolean {
    return token !== undefined && (token.type === 'symbol' || token.type === 'integer' || token.type === 'open');
  }

  private parseExpression(): ExactFactor {
    let result = this.parseProduct();
    if (this.peek()?.type === 'over') {
      this.position += 1;
      if (!this.startsFactor(this.peek())) throw new QuantitySyntaxFailure('"/" must be followed by a unit');
      result = divideFactors(result, this.parseFactor());
      const next = this.peek();
      if (next !== undefined && (next.type === 'over' || next.type === 'times' || this.startsFactor(next))) {
        throw new QuantitySyntaxFailure(
          'only one unit may follow "/" without parentheses; write for example "kg/(m*s)"',
        );
      }
    }
    return result;
  }

  private parseProduct(): ExactFactor {
    let result = this.parseFactor();
    for (;;) {
      const next = this.peek();
      if (next?.type === 'times') {
        this.position += 1;
        if (!this.startsFactor(this.peek())) {
          throw new QuantitySyntaxFailure(`${JSON.stringify(next.text)} must be followed by a unit`);
        }
        result = multiplyFactors(result, this.parseFactor());
      } else if (this.startsFactor(next)) {
        result = multiplyFactors(result, this.parseFactor());
      } else {
        return result;
      }
    }
  }

  private parseFactor(): ExactFactor {
    const base = this.parsePrimary();
    const next = this.peek();
    if (next?.type === 'superscript') {
      this.position += 1;
      return raiseFactor(base, this.checkPower(next.value));
    }
    if (next?.type === 'caret') {
      this.position += 1;
      let sign = 1;
      const signToken = this.peek();
      if (signToken?.type === 'minus' || signToken?.type === 'plus') {
        sign = signToken.type === 'minus' ? -1 : 1;
        this.position += 1;
      }
      const powerToken = this.peek();
      if (powerToken?.type !== 'integer') {
        throw new QuantitySyntaxFailure('"^" must be followed by an integer power, as in "m^2" or "s^-1"');
      }
      this.position += 1;
      return raiseFactor(base, this.checkPower(sign * Number(powerToken.text)));
    }
    return base;
  }

  private checkPower(power: number): number {
    if (!Number.isSafeInteger(power) || Math.abs(power) > MAX_POWER) {
      throw new QuantitySyntaxFailure(`power ${power} is out of range (at most ${MAX_POWER} in size)`);
    }
    return power;
  }

  private parsePrimary(): ExactFactor {
    const token = this.peek();
    if (token === undefined) throw new QuantitySyntaxFailure('a unit is missing at the end');
    if (token.type === 'symbol') {
      this.position += 1;
      const factor = lookUpSymbol(token.text);
      if (factor === undefined) throw new QuantitySyntaxFailure('unknown unit', token.text);
      return factor;
    }
    if (token.type === 'integer') {
      if (token.text === '1' && this.peek(1)?.type === 'over') {
        this.position += 1;
        return UNIT_ONE;
      }
      throw new QuantitySyntaxFailure(
        `unexpected number ${JSON.stringify(token.text)} in the unit; write powers with "^", as in "m^2"`,
      );
    }
    if (token.type === 'open') {
      this.position += 1;
      const inner = this.parseExpression();
      if (this.peek()?.type !== 'close') throw new QuantitySyntaxFailure('missing ")"');
      this.position += 1;
      return inner;
    }
    throw new QuantitySyntaxFailure(`unexpected ${JSON.stringify(token.text)}`);
  }
}

// ---------------------------------------------------------------------------
// Numbers
// ---------------------------------------------------------------------------

const NUMBER_SOURCE = '[+-]?(?:\\d+(?:\\.\\d*)?|\\.\\d+)(?:[eE][+-]?\\d+)?';
const LEADING_NUMBER = new RegExp(`^(${NUMBER_SOURCE})`);
const NON_FINITE_WORD = /^[+-]?(?:nan|inf|infinity)\b/i;

interface ParsedText {
  /** The digits of the number, sign included, without the decimal point. */
  readonly mantissa: bigint;
  /** The number is mantissa * 10^decimalExponent. */
  readonly decimalExponent: number;
  /** The unit, or undefined when the text is a bare number (taken as SI). */
  readonly unit: ExactFactor | undefined;
}

function parseText(text: string): ParsedText {
  const trimmed = text.trim();
  if (trimmed === '') throw new QuantitySyntaxFailure('it is empty');
  if (NON_FINITE_WORD.test(trimmed)) throw new QuantitySyntaxFailure('it is not a finite number');
  const match = LEADING_NUMBER.exec(trimmed);
  if (match === null) throw new QuantitySyntaxFailure('it does not start with a number');
  const numberText = match[1] ?? '';
  const literalValue = Number(numberText);
  const exponentMatch = /^([+-]?)(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d+))?$/.exec(numberText);
  if (exponentMatch === null) throw new QuantitySyntaxFailure('it does not start with a number');
  const sign = exponentMatch[1] === '-' ? -1n : 1n;
  const integerDigits = exponentMatch[2] ?? '';
  const fractionDigits = exponentMatch[3] ?? '';
  const mantissa = sign * BigInt(integerDigits + fractionDigits);
  if (!Number.isFinite(literalValue) || (literalValue === 0 && mantissa !== 0n)) {
    throw new QuantitySyntaxFailure('the number is out of the range of double precision');
  }
  const decimalExponent = Number(exponentMatch[4] ?? '0') - fractionDigits.length;
  const unitText = trimmed.slice(numberText.length);
  if (unitText.trim() === '') return { mantissa, decimalExponent, unit: undefined };
  const unitFactor = new UnitExpressionParser(tokenize(unitText)).parseWhole();
  return { mantissa, decimalExponent, unit: unitFactor };
}

// ---------------------------------------------------------------------------
// Kinds
// ---------------------------------------------------------------------------

interface KindDescription {
  readonly dimensions: Dimensions;
  /** Noun phrase with article, used in messages: "a length". */
  readonly phrase: string;
  /** An accepted string for messages, or a bare number for dimensionless. */
  readonly example: string;
  /** The same example in SI, as printed in messages. */
  readonly exampleSI: string;
  /** Preferred display unit symbol (parsed at load to get its factor). */
  readonly displaySymbol: string;
}

const KINDS: Readonly<Record<QuantityKind, KindDescription>> = {
  length: { dimensions: LENGTH, phrase: 'a length', example: '250 mm', exampleSI: '0.25', displaySymbol: 'mm' },
  mass: { dimensions: MASS, phrase: 'a mass', example: '1.2 kg', exampleSI: '1.2', displaySymbol: 'kg' },
  time: { dimensions: TIME, phrase: 'a time', example: '20 ms', exampleSI: '0.02', displaySymbol: 's' },
  angle: { dimensions: ANGLE, phrase: 'an angle', example: '30 deg', exampleSI: '0.5236', displaySymbol: 'deg' },
  speed: { dimensions: [1, 0, -1, 0], phrase: 'a speed', example: '2 m/s', exampleSI: '2', displaySymbol: 'm/s' },
  acceleration: {
    dimensions: [1, 0, -2, 0],
    phrase: 'an acceleration',
    example: '20 m/s^2',
    exampleSI: '20',
    displaySymbol: 'm/s^2',
  },
  angularSpeed: {
    dimensions: [0, 0, -1, 1],
    phrase: 'an angular speed',
    example: '3000 rpm',
    exampleSI: '314.16',
    displaySymbol: 'rpm',
  },
  angularAcceleration: {
    dimensions: [0, 0, -2, 1],
    phrase: 'an angular acceleration',
    example: '100 rad/s^2',
    exampleSI: '100',
    displaySymbol: 'rad/s^2',
  },
  force: { dimensions: FORCE, phrase: 'a force', example: '50 N', exampleSI: '50', displaySymbol: 'N' },
  torque: { dimensions: ENERGY, phrase: 'a torque', example: '0.8 N*m', exampleSI: '0.8', displaySymbol: 'N*m' },
  rotationalStiffness: {
    dimensions: [2, 1, -2, -1],
    phrase: 'a rotational stiffness',
    example: '5000 N*m/rad',
    exampleSI: '5000',
    displaySymbol: 'N*m/rad',
  },
  linearStiffness: {
    dimensions: [0, 1, -2, 0],
    phrase: 'a linear stiffness',
    example: '1e5 N/m',
    exampleSI: '100000',
    displaySymbol: 'N/m',
  },
  modulus: {
    dimensions: [-1, 1, -2, 0],
    phrase: 'a modulus (pressure)',
    example: '70 GPa',
    exampleSI: '7e10',
    displaySymbol: 'GPa',
  },
  density: {
    dimensions: [-3, 1, 0, 0],
    phrase: 'a density',
    example: '2700 kg/m^3',
    exampleSI: '2700',
    displaySymbol: 'kg/m^3',
  },
  massPerLength: {
    dimensions: [-1, 1, 0, 0],
    phrase: 'a mass per length',
    example: '0.5 kg/m',
    exampleSI: '0.5',
    displaySymbol: 'kg/m',
  },
  inertia: {
    dimensions: [2, 1, 0, 0],
    phrase: 'a moment of inertia',
    example: '2e-5 kg*m^2',
    exampleSI: '2e-5',
    displaySymbol: 'kg*m^2',
  },
  area: { dimensions: [2, 0, 0, 0], phrase: 'an area', example: '100 mm^2', exampleSI: '1e-4', displaySymbol: 'm^2' },
  secondMomentOfArea: {
    dimensions: [4, 0, 0, 0],
    phrase: 'a second moment of area',
    example: '2e4 mm^4',
    exampleSI: '2e-8',
    displaySymbol: 'mm^4',
  },
  frequency: {
    dimensions: [0, 0, -1, 0],
    phrase: 'a frequency',
    example: '50 Hz',
    exampleSI: '50',
    displaySymbol: 'Hz',
  },
  power: { dimensions: [2, 1, -3, 0], phrase: 'a power', example: '200 W', exampleSI: '200', displaySymbol: 'W' },
  dimensionless: {
    dimensions: DIMENSIONLESS,
    phrase: 'a dimensionless number',
    example: '0.5',
    exampleSI: '0.5',
    displaySymbol: '',
  },
};

function kindOfDimensions(dimensions: Dimensions): QuantityKind | undefined {
  return QUANTITY_KINDS.find((kind) => sameDimensions(KINDS[kind].dimensions, dimensions));
}

function describeDimensions(dimensions: Dimensions): string {
  const names = ['m', 'kg', 's', 'rad'];
  const parts: string[] = [];
  dimensions.forEach((exponent, index) => {
    if (exponent === 0) return;
    parts.push(exponent === 1 ? (names[index] ?? '?') : `${names[index] ?? '?'}^${exponent}`);
  });
  return parts.join('*');
}

function expectation(description: KindDescription): string {
  const example =
    description.example === description.exampleSI
      ? description.exampleSI
      : `${JSON.stringify(description.example)} or ${description.exampleSI}`;
  return `expected ${description.phrase} (for example ${example})`;
}

function quoteInput(text: string): string {
  const limit = 60;
  return JSON.stringify(text.length > limit ? `${text.slice(0, limit)}...` : text);
}

function describeValue(input: unknown): string {
  if (input === null) return 'null';
  if (Array.isArray(input)) return 'a list';
  if (typeof input === 'object') return 'an object';
  if (typeof input === 'boolean') return String(input);
  return `a value of type ${typeof input}`;
}

const ANGLE_HINT =
  ' Angles count as a dimension here: write rad, deg or rev explicitly' +
  ' (Hz and 1/s are frequencies, rad/s and rpm are angular speeds, N*m/rad is a rotational stiffness).';

// ---------------------------------------------------------------------------
// Public API
// ---------------------------------------------------------------------------

/**
 * Parses a number (taken as SI) or a "<number> <unit expression>" string into SI.
 * `where` names the field for the message, e.g. "geometry.crank_1.min".
 * Throws UnitError with a message naming the field, what was given, the
 * expected kind and an example of an accepted unit, e.g.
 * geometry.crank_1.min: "25 kg" is a mass, expected a length (for example "250 mm" or 0.25).
 */
export function parseQuantity(input: unknown, kind: QuantityKind, where: string): number {
  const description: KindDescription | undefined = KINDS[kind];
  const prefix = where === '' ? '' : `${where}: `;
  if (description === undefined) {
    throw new UnitError(`${prefix}unknown quantity kind ${JSON.stringify(kind)}`);
  }
  if (typeof input === 'number') {
    if (!Number.isFinite(input)) {
      throw new UnitError(`${prefix}${String(input)} is not a finite number, ${expectation(description)}.`);
    }
    return input;
  }
  if (input === undefined) {
    throw new UnitError(`${prefix}no value given, ${expectation(description)}.`);
  }
  if (typeof input !== 'string') {
    throw new UnitError(`${prefix}${describeValue(input)} is not a quantity, ${expectation(description)}.`);
  }
  const quoted = quoteInput(input);
  let parsed: ParsedText;
  try {
    parsed = parseText(input);
  } catch (failure) {
    if (!(failure instanceof QuantitySyntaxFailure)) throw failure;
    if (failure.unknownSymbol !== undefined) {
      const suggestion = suggestSymbol(failure.unknownSymbol);
      const didYouMean = suggestion === undefined ? '' : ` (did you mean "${suggestion}"?)`;
      throw new UnitError(
        `${prefix}${quoted} uses the unknown unit ${quoteInput(failure.unknownSymbol)}${didYouMean}; ` +
          `known units include ${SAMPLE_SYMBOLS}; ${expectation(description)}.`,
      );
    }
    throw new UnitError(`${prefix}${quoted} is not a valid quantity: ${failure.detail}; ${expectation(description)}.`);
  }
  const unitFactor = parsed.unit ?? UNIT_ONE;
  if (parsed.unit !== undefined && !sameDimensions(parsed.unit.dimensions, description.dimensions)) {
    const givenKind = kindOfDimensions(parsed.unit.dimensions);
    const given =
      givenKind === undefined
        ? `has SI units ${describeDimensions(parsed.unit.dimensions)}`
        : `is ${KINDS[givenKind].phrase}`;
    const onlyAngleDiffers =
      parsed.unit.dimensions[0] === description.dimensions[0] &&
      parsed.unit.dimensions[1] === description.dimensions[1] &&
      parsed.unit.dimensions[2] === description.dimensions[2];
    throw new UnitError(
      `${prefix}${quoted} ${given}, ${expectation(description)}.${onlyAngleDiffers ? ANGLE_HINT : ''}`,
    );
  }
  const value = exactToDouble(parsed.mantissa, parsed.decimalExponent, unitFactor);
  if (!Number.isFinite(value) || (value === 0 && parsed.mantissa !== 0n)) {
    throw new UnitError(`${prefix}${quoted} is out of the range of double precision in SI; ${expectation(description)}.`);
  }
  return value;
}

/** The SI value of one display unit of each kind, computed by the parser itself. */
const DISPLAY_FACTORS: Readonly<Record<QuantityKind, number>> = Object.fromEntries(
  QUANTITY_KINDS.map((kind) => {
    const symbol = KINDS[kind].displaySymbol;
    const factor = symbol === '' ? 1 : parseQuantity(`1 ${symbol}`, kind, `display unit of ${kind}`);
    return [kind, factor];
  }),
) as Record<QuantityKind, number>;

/**
 * Preferred display unit of a kind: length mm, mass kg, time s, angle deg,
 * angularSpeed rpm, angularAcceleration rad/s^2, torque N*m, rotational
 * stiffness N*m/rad, linear stiffness N/m, modulus GPa, density kg/m^3,
 * inertia kg*m^2, area m^2, second moment of area mm^4, frequency Hz,
 * power W; dimensionless has an empty symbol.
 * SI value / factor = display value.
 */
export function displayUnit(kind: QuantityKind): { symbol: string; factor: number } {
  return { symbol: KINDS[kind].displaySymbol, factor: DISPLAY_FACTORS[kind] };
}

/** Moves the decimal point of a "d.ddd" digit string `shift` places to the right. */
function shiftDecimalPoint(mantissaText: string, shift: number): string {
  const negative = mantissaText.startsWith('-');
  const digits = (negative ? mantissaText.slice(1) : mantissaText).replace('.', '');
  const integerLength = 1 + shift;
  const integerPart = digits.slice(0, integerLength).padEnd(integerLength, '0');
  const fractionPart = digits.slice(integerLength).replace(/0+$/, '');
  return `${negative ? '-' : ''}${integerPart}${fractionPart === '' ? '' : `.${fractionPart}`}`;
}

/** `digits` significant digits; plain for 1e-3 <= |x| < 1e4, engineering notation otherwise. */
function formatSignificant(value: number, digits: number): string {
  if (value === 0) return '0';
  const magnitude = Math.abs(value);
  if (magnitude >= 1e-3 && magnitude < 1e4) {
    const rounded = Number(value.toPrecision(digits));
    if (Math.abs(rounded) < 1e4) return String(rounded);
  }
  const [mantissaText = '0', exponentText = '0'] = value.toExponential(digits - 1).split('e');
  const exponent = Number(exponentText);
  const engineeringExponent = Math.floor(exponent / 3) * 3;
  const shifted = shiftDecimalPoint(mantissaText, exponent - engineeringExponent);
  return engineeringExponent === 0 ? shifted : `${shifted}e${engineeringExponent}`;
}

/**
 * Formats an SI value in the kind's display unit with `digits` significant
 * digits (default 4), e.g. formatQuantity(0.25, 'length') === "250 mm",
 * formatQuantity(1e5, 'linearStiffness') === "100e3 N/m". The result is
 * accepted by parseQuantity for the same kind. Non-finite values print as
 * "NaN", "Infinity" or "-Infinity" without a unit.
 */
export function formatQuantity(valueSI: number, kind: QuantityKind, digits = 4): string {
  if (!Number.isInteger(digits) || digits < 1 || digits > 17) {
    throw new RangeError(`formatQuantity: digits must be an integer from 1 to 17, got ${digits}`);
  }
  if (!Number.isFinite(valueSI)) return String(valueSI);
  const { symbol, factor } = displayUnit(kind);
  const text = formatSignificant(valueSI / factor, digits);
  return symbol === '' ? text : `${text} ${symbol}`;
}

const PATTERN_SYMBOL = '(?:[A-Za-z\\u00B5\\u03BC\\u00B0]+|1(?=\\s*/))';
const PATTERN_POWER =
  '(?:\\s*\\^\\s*(?:[+-]\\s*)?\\d+|\\s*[\\u207A\\u207B]?[\\u2070\\u00B9\\u00B2\\u00B3\\u2074-\\u2079]+)?';
const PATTERN_FACTOR = `(?:\\(\\s*)*${PATTERN_SYMBOL}${PATTERN_POWER}(?:\\s*\\)${PATTERN_POWER})*`;
const PATTERN_SEPARATOR = '(?:\\s*[*/\\u00B7\\u22C5]\\s*|\\s+)';

/**
 * Regular expression source (for a JSON Schema "pattern", valid with and
 * without the "u" flag) accepting "<number> <unit expression>" strings and
 * bare number strings. It checks the shape only; parseQuantity checks unit
 * names, dimensions and parentheses.
 */
export const UNIT_PATTERN: string =
  `^\\s*${NUMBER_SOURCE}(?:\\s*${PATTERN_FACTOR}(?:${PATTERN_SEPARATOR}${PATTERN_FACTOR})*)?\\s*$`;
