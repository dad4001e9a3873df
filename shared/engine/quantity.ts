/**
 * Quantities as written on old drawings: fractional and decimal inches, thou, feet and inches,
 * millimetres, centimetres and degrees. Parsing keeps how the value was written (fraction or
 * decimal, how many places) because that is what sets its implied tolerance.
 *
 * Exactness: 1 in = 25.4 mm exactly (international yard and pound agreement, 1959; NIST SP 811).
 * Values are kept as a rational in the unit they were written in, and converted with a single
 * division, so 1/8 in gives 3.175 mm and 0.015 in gives 0.381 mm, correctly rounded.
 */
import { MM_PER_IN, nearestFraction, type ModelUnit } from './length';
import { EngineError } from './errors';
import { NUMERIC_TOLERANCE } from './numeric';

export type LengthUnit = 'in' | 'ft' | 'thou' | 'mm' | 'cm';
export type QuantityUnit = LengthUnit | 'deg';

/** How the number was written: it decides the implied tolerance. */
export type WrittenForm =
  'integer' | 'decimal' | 'fraction' | 'mixed' | 'feet-inches' | 'deg-min-sec';

export interface Quantity {
  /** `plain` is a number with no unit: it takes the model unit (or degrees for an angle). */
  dimension: 'length' | 'angle' | 'plain';
  unit: QuantityUnit | null;
  /** Millimetres for a length, degrees for an angle, the number itself for a plain number. */
  value: number;
  /** The exact value as num/den in the base of its family: inches, millimetres, degrees or plain. */
  exact: { num: number; den: number; base: 'in' | 'mm' | 'deg' | 'plain' };
  form: WrittenForm;
  /** Digits after the decimal point as written (of the last number, e.g. the inches of 2' 6.5"). */
  decimals: number;
  /** Denominator as written, for fractions. */
  denominator?: number;
}

/** A quantity that cannot be read, with the character offset where reading failed. */
export class QuantityError extends EngineError<'bad-quantity'> {
  constructor(
    message: string,
    readonly at: number,
  ) {
    super('bad-quantity', message, { at });
    this.name = 'QuantityError';
  }
}

const UNIT_WORDS: Record<string, QuantityUnit> = {
  in: 'in',
  inch: 'in',
  inches: 'in',
  '"': 'in',
  ft: 'ft',
  foot: 'ft',
  feet: 'ft',
  "'": 'ft',
  thou: 'thou',
  mil: 'thou',
  mils: 'thou',
  mm: 'mm',
  cm: 'cm',
  deg: 'deg',
  degree: 'deg',
  degrees: 'deg',
  '°': 'deg',
};

/** Each unit as an exact rational multiple of its family's base (inch, millimetre, degree). */
const UNIT_FACTOR: Record<QuantityUnit, { num: number; den: number; base: 'in' | 'mm' | 'deg' }> = {
  in: { num: 1, den: 1, base: 'in' },
  ft: { num: 12, den: 1, base: 'in' },
  thou: { num: 1, den: 1000, base: 'in' },
  mm: { num: 1, den: 1, base: 'mm' },
  cm: { num: 10, den: 1, base: 'mm' },
  deg: { num: 1, den: 1, base: 'deg' },
};

interface Rational {
  num: number;
  den: number;
}

function gcd(a: number, b: number): number {
  a = Math.abs(a);
  b = Math.abs(b);
  while (b) [a, b] = [b, a % b];
  return a || 1;
}

function reduce(num: number, den: number): Rational {
  if (!Number.isSafeInteger(num) || !Number.isSafeInteger(den)) return { num: num / den, den: 1 };
  const g = gcd(num, den);
  return { num: num / g, den: den / g };
}

function add(a: Rational, b: Rational): Rational {
  return reduce(a.num * b.den + b.num * a.den, a.den * b.den);
}

function mul(a: Rational, b: Rational): Rational {
  return reduce(a.num * b.num, a.den * b.den);
}

/** num/den with one rounding; falls back to float arithmetic if the integers got too large. */
function ratioToNumber(num: number, den: number): number {
  return num / den;
}

interface NumberPart {
  r: Rational;
  form: 'integer' | 'decimal' | 'fraction' | 'mixed';
  decimals: number;
  denominator?: number;
  end: number;
}

const DECIMAL_RE = /\d+\.?\d*|\.\d+/y;
const INTEGER_RE = /\d+/y;

class Scanner {
  pos = 0;
  constructor(readonly s: string) {}
  spaces(): void {
    while (this.pos < this.s.length && /\s/.test(this.s[this.pos]!)) this.pos++;
  }
  peek(): string {
    return this.s[this.pos] ?? '';
  }
  /**
   * The whole character here, for a message: both halves of a surrogate pair (an emoji), and
   * U+FFFD for half of one, so a message is always well-formed text.
   */
  shown(): string {
    const c = this.s.codePointAt(this.pos);
    if (c === undefined) return '';
    return c >= 0xd800 && c <= 0xdfff ? '\ufffd' : String.fromCodePoint(c);
  }
  atEnd(): boolean {
    return this.pos >= this.s.length;
  }
  /** Reads digits with an optional decimal point; null if none here. */
  decimal(): { text: string; at: number } | null {
    DECIMAL_RE.lastIndex = this.pos;
    const m = DECIMAL_RE.exec(this.s);
    if (!m) return null;
    const at = this.pos;
    this.pos += m[0].length;
    return { text: m[0], at };
  }
  integer(): { value: number; at: number } | null {
    INTEGER_RE.lastIndex = this.pos;
    const m = INTEGER_RE.exec(this.s);
    if (!m) return null;
    const at = this.pos;
    this.pos += m[0].length;
    return { value: Number(m[0]), at };
  }
}

function decimalToRational(text: string): { r: Rational; decimals: number } {
  const [whole, frac = ''] = text.split('.');
  const digits = (whole || '0') + frac;
  const den = 10 ** frac.length;
  const num = Number(digits);
  // Past 308 digits num or den overflows to Infinity (and their ratio to NaN): read the text as
  // one double instead, which is correctly rounded (a number too large stays Infinity and is
  // refused by the caller).
  if (!Number.isFinite(num) || !Number.isFinite(den))
    return { r: { num: Number(text), den: 1 }, decimals: frac.length };
  return { r: reduce(num, den), decimals: frac.length };
}

/** Reads `3`, `0.015`, `3/16`, `1 3/16` or `1-3/16` starting at the scanner position. */
function readNumberPart(sc: Scanner): NumberPart {
  const first = sc.decimal();
  if (!first)
    throw new QuantityError(
      sc.atEnd() ? 'expected a number' : `expected a number, found '${sc.shown()}'`,
      sc.pos,
    );
  const isInteger = !first.text.includes('.');
  const afterFirst = sc.pos;
  if (isInteger) {
    // Fraction: 3/16
    sc.spaces();
    if (sc.peek() === '/') {
      sc.pos++;
      sc.spaces();
      const den = sc.integer();
      if (!den || den.value === 0)
        throw new QuantityError(
          'a fraction needs a whole denominator greater than 0',
          den?.at ?? sc.pos,
        );
      if (!Number.isSafeInteger(den.value))
        throw new QuantityError('the denominator is too large', den.at);
      const num = Number(first.text);
      return {
        r: reduce(num, den.value),
        form: 'fraction',
        decimals: 0,
        denominator: den.value,
        end: sc.pos,
      };
    }
    // Mixed number: 1 3/16 or 1-3/16 (a hyphen joins whole and fraction in drawing practice).
    sc.pos = afterFirst;
    const save = sc.pos;
    sc.spaces();
    let joined = sc.pos > save;
    if (sc.peek() === '-') {
      sc.pos++;
      sc.spaces();
      joined = true;
    }
    if (joined) {
      const m = /^(\d+)\s*\/\s*(\d+)/.exec(sc.s.slice(sc.pos));
      if (m) {
        const denAt = sc.pos + m[0].length - m[2]!.length; // both groups are required
        const den = Number(m[2]);
        if (den === 0)
          throw new QuantityError('a fraction needs a whole denominator greater than 0', denAt);
        if (!Number.isSafeInteger(den))
          throw new QuantityError('the denominator is too large', denAt);
        sc.pos += m[0].length;
        const whole = Number(first.text);
        return {
          r: add({ num: whole, den: 1 }, reduce(Number(m[1]), den)),
          form: 'mixed',
          decimals: 0,
          denominator: den,
          end: sc.pos,
        };
      }
    }
    sc.pos = afterFirst;
    return { r: { num: Number(first.text), den: 1 }, form: 'integer', decimals: 0, end: sc.pos };
  }
  const { r, decimals } = decimalToRational(first.text);
  return { r, form: 'decimal', decimals, end: sc.pos };
}

/** Reads a unit word or mark at the scanner position; null if there is none. */
function readUnit(sc: Scanner): { unit: QuantityUnit; at: number } | null {
  const save = sc.pos;
  sc.spaces();
  const at = sc.pos;
  const c = sc.peek();
  if (c === '"' || c === "'" || c === '°') {
    sc.pos++;
    return { unit: UNIT_WORDS[c]!, at }; // each of these marks is a unit word
  }
  const m = /^[A-Za-z]+/.exec(sc.s.slice(sc.pos));
  if (m) {
    // Own keys only: `constructor` is not a unit.
    const word = m[0].toLowerCase();
    const unit = Object.hasOwn(UNIT_WORDS, word) ? UNIT_WORDS[word] : undefined;
    if (!unit)
      throw new QuantityError(
        `unknown unit '${m[0]}' (use in, ", thou, ft, ', mm, cm, deg or °)`,
        at,
      );
    sc.pos += m[0].length;
    return { unit, at };
  }
  sc.pos = save;
  return null;
}

/**
 * Parses a written quantity. A number with no unit is `plain` (it takes the model unit).
 *
 * @example parseQuantity('1 3/16"').value // 30.1625 (mm)
 * @example parseQuantity("2' 6\"").exact // { num: 30, den: 1, base: 'in' }
 * @example parseQuantity('15 thou').value // 0.381 (mm)
 * @example parseQuantity('30°').dimension // 'angle'
 */
export function parseQuantity(text: string): Quantity {
  const sc = new Scanner(text);
  sc.spaces();
  if (sc.atEnd()) throw new QuantityError('empty value', 0);
  let sign = 1;
  if (sc.peek() === '-' || sc.peek() === '+') {
    if (sc.peek() === '-') sign = -1;
    sc.pos++;
    sc.spaces();
  }
  const numberAt = sc.pos;
  const first = readNumberPart(sc);
  const unit1 = readUnit(sc);
  let r = first.r;
  let unit: QuantityUnit | null = unit1?.unit ?? null;
  let form: WrittenForm = first.form;
  let decimals = first.decimals;
  let denominator = first.denominator;

  if (unit === 'ft' && first.form !== 'fraction' && first.form !== 'mixed') {
    // Feet and inches: 2' 6", 2'-6 1/2", 2 ft 6 in. The inches part is optional.
    const save = sc.pos;
    sc.spaces();
    if (sc.peek() === '-') sc.pos++;
    sc.spaces();
    if (/[\d.]/.test(sc.peek())) {
      const inches = readNumberPart(sc);
      const u = readUnit(sc);
      if (u && u.unit !== 'in') throw new QuantityError('after feet, expected inches', u.at);
      r = add(mul(r, { num: 12, den: 1 }), inches.r);
      unit = 'in';
      form = 'feet-inches';
      decimals = inches.decimals;
      denominator = inches.denominator;
    } else {
      sc.pos = save;
    }
  } else if (unit === 'deg' && first.form !== 'fraction' && first.form !== 'mixed') {
    // Degrees, minutes and seconds: 30° 15' 30".
    const parts: Array<[number, string]> = [
      [60, "'"],
      [3600, '"'],
    ];
    for (const [div, mark] of parts) {
      const save = sc.pos;
      sc.spaces();
      const n = sc.decimal();
      if (!n) {
        sc.pos = save;
        break;
      }
      sc.spaces();
      if (sc.peek() !== mark) {
        throw new QuantityError(
          mark === "'"
            ? "expected ' (minutes) after the degrees"
            : 'expected " (seconds) after the minutes',
          sc.pos,
        );
      }
      sc.pos++;
      const part = decimalToRational(n.text);
      r = add(r, reduce(part.r.num, part.r.den * div));
      form = 'deg-min-sec';
      decimals = part.decimals;
    }
  }
  sc.spaces();
  if (!sc.atEnd()) throw new QuantityError(`unexpected '${sc.shown()}'`, sc.pos);

  r = { num: sign * r.num, den: r.den };
  const family = unit ? UNIT_FACTOR[unit] : null;
  const exactValue = family ? mul(r, family) : r;
  const base = family ? family.base : 'plain';
  const q: Quantity = {
    dimension: base === 'plain' ? 'plain' : base === 'deg' ? 'angle' : 'length',
    unit,
    value:
      base === 'in'
        ? ratioToNumber(exactValue.num * 254, exactValue.den * 10)
        : ratioToNumber(exactValue.num, exactValue.den),
    exact: { num: exactValue.num, den: exactValue.den, base },
    form,
    decimals,
  };
  // A whole number of 309 digits or more is beyond a double.
  if (!Number.isFinite(q.value) || !Number.isFinite(q.exact.num))
    throw new QuantityError('the number is too large', numberAt);
  if (denominator !== undefined) q.denominator = denominator;
  return q;
}

// prettier-ignore
const VULGAR_FRACTIONS: Readonly<Record<string, string>> = {
  '½': '1/2', '¼': '1/4', '¾': '3/4', '⅛': '1/8', '⅜': '3/8', '⅝': '5/8', '⅞': '7/8',
  '⅓': '1/3', '⅔': '2/3', '⅙': '1/6', '⅚': '5/6', '⅕': '1/5',
};

/**
 * A bare number as builders write one in words (a model scale, `1½ in to the foot`): whole,
 * decimal, fraction or mixed (`1 1/2`, `1-1/2`), or with a fraction character (`1½`, `½`),
 * read by the same rules as a quantity and converted from its exact rational. Undefined for
 * anything else, a unit or a sign included.
 *
 * @example parseMixedNumber('1½') // 1.5
 * @example parseMixedNumber('1-1/2') // 1.5
 * @example parseMixedNumber('1/2 in') // undefined
 */
export function parseMixedNumber(text: string): number | undefined {
  const t = text
    .trim()
    // `1 ½` and `1½` are `1 1/2`.
    .replace(/^(\d*)\s*([½¼¾⅛⅜⅝⅞⅓⅔⅙⅚⅕])$/, (_, whole: string, f: string) =>
      whole ? `${whole} ${VULGAR_FRACTIONS[f]}` : VULGAR_FRACTIONS[f]!,
    )
    // Any run of spaces and hyphens joins a whole number to its fraction.
    .replace(/^(\d+)[\s-]+(?=\d+\/)/, '$1 ');
  const sc = new Scanner(t);
  try {
    const part = readNumberPart(sc);
    return sc.pos === t.length ? ratioToNumber(part.r.num, part.r.den) : undefined;
  } catch (e) {
    if (e instanceof QuantityError) return undefined;
    throw e;
  }
}

/**
 * The quantity's value in a model unit (a plain number is taken to be in that unit already),
 * converted from its exact rational with a single rounding.
 *
 * @example quantityIn(parseQuantity('3/16'), 'in') // 0.1875
 * @example quantityIn(parseQuantity('4.7625 mm'), 'in') // 0.1875
 */
export function quantityIn(q: Quantity, unit: ModelUnit): number {
  const { num, den, base } = q.exact;
  if (base === 'plain' || base === 'deg' || base === unit) return num / den;
  // in → mm multiplies by 254/10; mm → in by 10/254.
  return base === 'in' ? (num * 254) / (den * 10) : (num * 10) / (den * 254);
}

export interface NominalSuggestion {
  /** The fraction the writer probably meant, e.g. `3/16`. */
  text: string;
  inches: number;
  mm: number;
  /** intended − written, in the written family's unit (inches or millimetres). */
  delta: number;
}

/**
 * Suggests the intended nominal behind a rounded decimal: 0.187 in was very likely 3/16
 * (0.1875), and 4.76 mm likely 3/16 in. A fraction qualifies when it lies within one unit of
 * the last written decimal place (which covers both truncation and rounding); the coarsest
 * such fraction wins. Returns null for fractions, angles, one-place decimals, or when nothing
 * fits.
 *
 * @example suggestNominal(parseQuantity('0.187'))?.text // '3/16'
 * @example suggestNominal(parseQuantity('4.76 mm'))?.text // '3/16'
 */
export function suggestNominal(
  q: Quantity,
  modelUnit: ModelUnit = 'in',
  maxDenominator = 64,
): NominalSuggestion | null {
  if (q.dimension === 'angle') return null;
  if (!(q.form === 'decimal' || (q.unit === 'thou' && q.form === 'integer'))) return null;
  // One decimal place is too coarse to point at one fraction (0.2 could be 3/16 or 1/4).
  if (q.decimals < 2 && q.unit !== 'thou') return null;
  const written = q.exact.num / q.exact.den;
  const isMm = q.exact.base === 'mm' || (q.exact.base === 'plain' && modelUnit === 'mm');
  const step = 10 ** -q.decimals * (q.unit === 'thou' ? 0.001 : 1);
  const inches = isMm ? written / MM_PER_IN : written;
  for (let den = 2; den <= maxDenominator; den *= 2) {
    const f = Math.round(inches * den) / den;
    const deltaInFamily = isMm ? f * MM_PER_IN - written : f - inches;
    if (f !== inches && Math.abs(deltaInFamily) <= step * (1 + NUMERIC_TOLERANCE.relative)) {
      const text = nearestFraction(f, den).text;
      return { text, inches: f, mm: (f * 254) / 10, delta: deltaInFamily };
    }
    if (f === inches) return null;
  }
  return null;
}
