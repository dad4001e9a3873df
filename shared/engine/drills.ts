/**
 * Stock drill sets and the nearest stock drill to a wanted size.
 *
 * Every size is held in millimetres (converted by `length.ts`) and, for the inch sets, in the
 * inch value the standard defines, so a label such as `#7` always means exactly 0.2010 in.
 *
 * Sources (tags as in the team's check-values reference):
 * - Number drills #1–#80 and letter drills A–Z: ASME B94.11M sizes, [published] Wikipedia
 *   "Drill bit sizes", Toolmex decimal-equivalent chart (docslib.org/doc/5335266) and a public
 *   transcription on GitHub; all three agree (check-values §5).
 * - Fractional drills: exact 1/64 in steps, 1/64 to 1 in [computed, exact].
 * - Metric drills: the BS 328 series, [published] Wikipedia "Drill bit sizes": 1.0–2.95 mm in
 *   0.05 mm steps, 3.0–13.9 mm in 0.1 mm steps, 14–25 mm in 0.25 mm steps (check-values §5).
 *   The finer steps below 3 mm matter: published tap drills such as 2.05 (M2.5, 7BA), 1.25
 *   (M1.6), 2.65 (5BA) and 1.55 (9BA) are in it and not in a plain 0.1 mm set.
 * - `metricTenths`: the boxed workshop set, 1.0–10.0 mm by 0.1 mm then 10.5–13 mm by 0.5 mm
 *   [common practice, no source]; the DIN 338 jobber range is sold in these steps [from memory].
 */

import { MM_PER_IN } from './length';
import { EngineError } from './errors';
import { TOLERANCES } from './numeric';

/** The family a stock drill belongs to. */
export type DrillFamily = 'metric' | 'number' | 'letter' | 'fractional';

/** Names of the drill sets `nearestDrill` can search. `inch` = number + letter + fractional. */
export type DrillSetName =
  'metric' | 'metricTenths' | 'number' | 'letter' | 'fractional' | 'numberLetter' | 'inch' | 'all';

/** One stock drill: its shop label, its size in both units, and the family it comes from. */
export interface StockDrill {
  readonly label: string;
  readonly mm: number;
  readonly inch: number;
  readonly set: DrillFamily;
}

/** How `nearestDrill` chooses: closest either way, or never smaller / never larger. */
export type DrillPickMode = 'nearest' | 'atLeast' | 'atMost';

export type DrillErrorCode = 'invalid-size' | 'no-drill-in-range' | 'unknown-set';

/** A drill look-up that cannot be answered; `details` says what was asked. */
export class DrillError extends EngineError<DrillErrorCode> {
  override readonly name = 'DrillError';
  constructor(
    code: DrillErrorCode,
    message: string,
    readonly details: { readonly mm?: number; readonly set?: string; readonly mode?: string } = {},
  ) {
    // The size asked for is the input at fault.
    super(code, message, details.mm === undefined ? {} : { input: `${details.mm} mm` });
  }
}

// What a builder reads. Checked against: number and letter [published] Wikipedia "Drill bit
// sizes" and the Toolmex chart (docslib.org/doc/5335266); metric [published] Wikipedia "Drill
// bit sizes" (check-values §5); fractional [computed, exact]; the tenths set
// [common practice, no source].
export const DRILL_SET_SOURCES: Readonly<Record<DrillFamily | 'metricTenths', string>> = {
  number: 'ASME B94.11M number drills #1–#80',
  letter: 'ASME B94.11M letter drills A–Z',
  fractional: 'Fractional inch drills in 1/64 in steps to 1 in',
  metric: 'BS 328 metric series 1.0–25 mm (0.05 mm to 2.95, 0.1 mm to 13.9, 0.25 mm to 25)',
  metricTenths: 'Metric set 1.0–10.0 mm by 0.1, 10.5–13 mm by 0.5 (workshop practice)',
};

// Number drills #1–#80 in inches, index 0 = #1 (check-values §5, [published]).
// prettier-ignore
const NUMBER_DRILL_INCHES: readonly number[] = [
  0.228, 0.221, 0.213, 0.209, 0.2055, 0.204, 0.201, 0.199, 0.196, 0.1935, // #1–#10
  0.191, 0.189, 0.185, 0.182, 0.18, 0.177, 0.173, 0.1695, 0.166, 0.161, // #11–#20
  0.159, 0.157, 0.154, 0.152, 0.1495, 0.147, 0.144, 0.1405, 0.136, 0.1285, // #21–#30
  0.12, 0.116, 0.113, 0.111, 0.11, 0.1065, 0.104, 0.1015, 0.0995, 0.098, // #31–#40
  0.096, 0.0935, 0.089, 0.086, 0.082, 0.081, 0.0785, 0.076, 0.073, 0.07, // #41–#50
  0.067, 0.0635, 0.0595, 0.055, 0.052, 0.0465, 0.043, 0.042, 0.041, 0.04, // #51–#60
  0.039, 0.038, 0.037, 0.036, 0.035, 0.033, 0.032, 0.031, 0.0292, 0.028, // #61–#70
  0.026, 0.025, 0.024, 0.0225, 0.021, 0.02, 0.018, 0.016, 0.0145, 0.0135, // #71–#80
];

// Letter drills A–Z in inches (check-values §5, [published]); E is 1/4 in exactly.
const LETTER_DRILL_INCHES: readonly number[] = [
  0.234, 0.238, 0.242, 0.246, 0.25, 0.257, 0.261, 0.266, 0.272, 0.277, 0.281, 0.29, 0.295, 0.302,
  0.316, 0.323, 0.332, 0.339, 0.348, 0.358, 0.368, 0.377, 0.386, 0.397, 0.404, 0.413,
];

function inchDrill(label: string, inch: number, set: DrillFamily): StockDrill {
  return Object.freeze({ label, mm: inch * MM_PER_IN, inch, set });
}

function metricDrill(mm: number): StockDrill {
  return Object.freeze({ label: `${formatMm(mm)} mm`, mm, inch: mm / MM_PER_IN, set: 'metric' });
}

/** Metric sizes are built on an integer grid of 0.01 mm so 2.95 is 2.95, not 2.9500000000000002. */
function metricRange(fromHundredths: number, toHundredths: number, stepHundredths: number) {
  const sizes: number[] = [];
  for (let h = fromHundredths; h <= toHundredths; h += stepHundredths) sizes.push(h / 100);
  return sizes;
}

function formatMm(mm: number): string {
  return String(Math.round(mm * 100) / 100);
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}

function fractionLabel(sixtyFourths: number): string {
  if (sixtyFourths === 64) return '1"';
  const g = gcd(sixtyFourths, 64);
  return `${sixtyFourths / g}/${64 / g}"`;
}

const byMm = (a: StockDrill, b: StockDrill) => a.mm - b.mm;

export const NUMBER_DRILLS: readonly StockDrill[] = Object.freeze(
  NUMBER_DRILL_INCHES.map((inch, i) => inchDrill(`#${i + 1}`, inch, 'number')).sort(byMm),
);

export const LETTER_DRILLS: readonly StockDrill[] = Object.freeze(
  LETTER_DRILL_INCHES.map((inch, i) => inchDrill(String.fromCharCode(65 + i), inch, 'letter')),
);

export const FRACTIONAL_DRILLS: readonly StockDrill[] = Object.freeze(
  Array.from({ length: 64 }, (_, i) => inchDrill(fractionLabel(i + 1), (i + 1) / 64, 'fractional')),
);

export const METRIC_DRILLS: readonly StockDrill[] = Object.freeze(
  [...metricRange(100, 295, 5), ...metricRange(300, 1390, 10), ...metricRange(1400, 2500, 25)].map(
    metricDrill,
  ),
);

export const METRIC_TENTHS_DRILLS: readonly StockDrill[] = Object.freeze(
  [...metricRange(100, 1000, 10), ...metricRange(1050, 1300, 50)].map(metricDrill),
);

const SETS: Readonly<Record<DrillSetName, readonly StockDrill[]>> = {
  metric: METRIC_DRILLS,
  metricTenths: METRIC_TENTHS_DRILLS,
  number: NUMBER_DRILLS,
  letter: LETTER_DRILLS,
  fractional: FRACTIONAL_DRILLS,
  numberLetter: Object.freeze([...NUMBER_DRILLS, ...LETTER_DRILLS].sort(byMm)),
  inch: Object.freeze([...NUMBER_DRILLS, ...LETTER_DRILLS, ...FRACTIONAL_DRILLS].sort(byMm)),
  all: Object.freeze(
    [...METRIC_DRILLS, ...NUMBER_DRILLS, ...LETTER_DRILLS, ...FRACTIONAL_DRILLS].sort(byMm),
  ),
};

/**
 * The drills in a named set, smallest first.
 *
 * @example drillSet('letter')[0] // { label: 'A', mm: 5.9436, inch: 0.234, set: 'letter' }
 */
export function drillSet(name: DrillSetName): readonly StockDrill[] {
  const set = SETS[name];
  if (!set) throw new DrillError('unknown-set', `No drill set named "${name}"`, { set: name });
  return set;
}

// A stock drill within a nanometre of the wanted size counts as that size, so 'atLeast 5.1'
// still returns the 5.1 mm drill despite binary rounding of 5.1.
const SAME_SIZE_MM = TOLERANCES.sameTableSize;

/**
 * The stock drill in `set` closest to `mm`; `atLeast` never goes under the size (clearance
 * holes), `atMost` never over it. Ties go to the smaller drill.
 *
 * @example nearestDrill(5.11, 'numberLetter') // { label: '#7', mm: 5.1054, inch: 0.201, ... }
 * @example nearestDrill(6.45, 'metric', { mode: 'atLeast' }).label // '6.5 mm'
 */
export function nearestDrill(
  mm: number,
  set: DrillSetName = 'all',
  options: { mode?: DrillPickMode } = {},
): StockDrill {
  const mode = options.mode ?? 'nearest';
  if (!Number.isFinite(mm) || mm <= 0) {
    throw new DrillError('invalid-size', `A drill size must be a positive length, not ${mm}`, {
      mm,
      set,
      mode,
    });
  }
  const candidates = drillSet(set).filter((d) =>
    mode === 'atLeast'
      ? d.mm >= mm - SAME_SIZE_MM
      : mode === 'atMost'
        ? d.mm <= mm + SAME_SIZE_MM
        : true,
  );
  let best: StockDrill | undefined;
  for (const d of candidates) {
    if (!best || Math.abs(d.mm - mm) < Math.abs(best.mm - mm) - SAME_SIZE_MM) best = d;
  }
  if (!best) {
    throw new DrillError(
      'no-drill-in-range',
      `No ${set} drill ${mode === 'atLeast' ? 'at least' : 'at most'} ${formatMm(mm)} mm`,
      { mm, set, mode },
    );
  }
  return best;
}

/**
 * Finds a stock drill by its shop label: `#7`, `No. 7`, `F`, `5/16"`, `5/16 in`, `4.2 mm`.
 * Answers `undefined` for a label that names no stock drill.
 *
 * @example drillByLabel('No. 43')?.inch // 0.089
 */
export function drillByLabel(label: string): StockDrill | undefined {
  const text = label.trim();
  const num = /^(?:#|no\.?\s*)(\d{1,2})$/i.exec(text);
  if (num) return NUMBER_DRILLS.find((d) => d.label === `#${Number(num[1])}`);
  if (/^[A-Z]$/i.test(text)) return LETTER_DRILLS.find((d) => d.label === text.toUpperCase());
  const frac = /^(\d+)\/(\d+)\s*(?:"|in|inch)?$/i.exec(text);
  if (frac) {
    const inch = Number(frac[1]) / Number(frac[2]);
    return FRACTIONAL_DRILLS.find((d) => Math.abs(d.inch - inch) < TOLERANCES.sameComputedSize);
  }
  if (/^1\s*(?:"|in|inch)$/i.test(text)) return FRACTIONAL_DRILLS[FRACTIONAL_DRILLS.length - 1];
  const metric = /^(\d+(?:\.\d+)?)\s*mm$/i.exec(text);
  if (metric) {
    const mm = Number(metric[1]);
    return METRIC_DRILLS.find((d) => Math.abs(d.mm - mm) < SAME_SIZE_MM);
  }
  return undefined;
}
