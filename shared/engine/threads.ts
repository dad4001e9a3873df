/**
 * Screw-thread tables, tap drills and clearance drills.
 *
 * Over 600 lines because most of it is tables (each series' sizes and pitches with their
 * sources); the rules that read them are short.
 *
 * Series held here, each with its published source (tags as in the team's check-values
 * reference, which names the pages):
 * - BA 0–10 (BS 93): sizes computed from the defining formulas p = 0.9ⁿ and d = 6p^1.2, both
 *   rounded to 2 significant figures, and the BS 93 table rounding of the depth h = 0.6p to
 *   0.005 mm; the tests check every size against the published BS 93 table.
 * - ISO metric coarse M1.6–M24 with the second-choice sizes (ISO 261/262), and the common
 *   fine pitches (ISO 261, pitches [from memory]; the reference has no fine-pitch table).
 * - Unified UNC/UNF #2 to 1/2 in (ASME B1.1); numbered majors are 0.060 + 0.013·N in.
 * - ME (Model Engineer) 40 and 32 TPI, 55° Whitworth form at constant pitch.
 *
 * Percent thread, the quantity a tap drill is chosen by, is measured per series against the
 * depth its own charts use, so the rule reproduces those charts (formulas in `PERCENT_RULES`).
 */
import { MM_PER_IN } from './length';
import { drillByLabel, nearestDrill, type DrillSetName, type StockDrill } from './drills';
import { EngineError } from './errors';
import { TOLERANCES } from './numeric';

export type ThreadSeries = 'BA' | 'ISO metric coarse' | 'ISO metric fine' | 'UNC' | 'UNF' | 'ME';

/** One thread size in basic (nominal) dimensions; lengths in mm. */
export interface ThreadSpec {
  /** Canonical designation: `2BA`, `M5`, `M5x0.5`, `1/4-20 UNC`, `#10-32 UNF`, `1/4x40 ME`. */
  readonly designation: string;
  readonly series: ThreadSeries;
  readonly majorDiameterMm: number;
  readonly pitchMm: number;
  /** Threads per inch: the defining figure for Unified and ME; an inch over the pitch for BA. Absent for ISO. */
  readonly tpi?: number;
  readonly angleDeg: number;
  /** Basic minor diameter of the internal thread (the nut), which a tap drill must not undercut. */
  readonly minorDiameterMm: number;
  /** Basic effective (pitch) diameter. */
  readonly pitchDiameterMm: number;
  /** ISO 261/262 preference for metric sizes. */
  readonly choice?: '1st' | '2nd';
  readonly source: string;
}

export type ThreadErrorCode =
  | 'unrecognised-designation'
  | 'unknown-size'
  | 'unknown-pitch'
  | 'series-mismatch'
  | 'series-needed'
  | 'invalid-percent';

/** A thread question that cannot be answered; `details.input` is what was asked. */
export class ThreadError extends EngineError<ThreadErrorCode> {
  override readonly name = 'ThreadError';
  constructor(
    code: ThreadErrorCode,
    message: string,
    readonly details: { readonly input: string; readonly known?: readonly string[] },
  ) {
    super(code, message, { input: details.input });
  }
}

/** A drill named by a table or a rule, with where that answer came from. */
export interface DrillRecommendation {
  readonly label: string;
  readonly mm: number;
  readonly inch: number;
  readonly source: string;
}

export interface TapDrillAnswer {
  readonly thread: ThreadSpec;
  /** The % thread asked for. */
  readonly targetPercent: number;
  /** The drill the % rule gives before rounding to a stock size. */
  readonly theoreticalMm: number;
  /** The % thread formula used for this series. */
  readonly rule: string;
  /** Nearest stock drill to `theoreticalMm` in the chosen set, and the % thread it really cuts. */
  readonly stock: StockDrill & { readonly percentThread: number };
  /** The drill the series' published chart gives, where one is held, with its % thread. */
  readonly published?: DrillRecommendation & { readonly percentThread: number };
  readonly source: string;
}

export interface ClearanceAnswer {
  readonly thread: ThreadSpec;
  /** Close fit: the smaller clearance, for location. */
  readonly close: DrillRecommendation;
  /** Free fit: the usual clearance hole. */
  readonly free: DrillRecommendation;
  readonly source: string;
}

// ---------------------------------------------------------------------------------------------
// Sources

// The words below are what a builder reads (feature form, shop sheet, API): the standard only.
// Where each figure was checked stays here, in the team's check-values tags:
// BA: [published] Wikipedia "British Association screw threads"; BS 93:1951 table transcription
//   (check-values §1.1–1.2).
// ISO coarse: [published] Wikipedia "ISO metric screw thread" ISO 261/262 table (§2.1–2.2).
// ISO fine: [published] induspecs.com "Metric Thread Pitch Chart (ISO Standard)" fine-pitch
//   column, searched for issue 16; the profile [published] Wikipedia (§2.1).
// Unified: numbered majors [published] IBLS wiki (Coventry 1954); TPI [published]
//   sequoia-brass-copper.com, boltport.com (§3).
// ME: form [published] thread-data sheet, scribd 36661779; sizes [published] ministeam.net
//   page30 (40 TPI 1/8–1/4, 32 TPI 1/4–3/8) and the IBLS "British Standard" list (3/8 × 40)
//   (§4). The reference names no British Standard for the ME series itself (SMEE, c. 1912);
//   the 55° form is the Whitworth form of BS 84.
const SRC_BA = 'BS 93 (BA threads, 47.5°)';
const SRC_ISO_COARSE = 'ISO 261/262 coarse pitches, ISO 68-1 profile';
const SRC_ISO_FINE = 'ISO 261 fine pitches, ISO 68-1 profile';
const SRC_UNIFIED = 'ASME B1.1 Unified threads';
const SRC_ME = 'Model Engineer series, 55° Whitworth form (BS 84)';

// ---------------------------------------------------------------------------------------------
// Tables

/** Rounds to `digits` significant figures, the rounding BS 93 states for p and d. */
function roundSignificant(x: number, digits: number): number {
  return Number(x.toPrecision(digits));
}

function roundTo(x: number, step: number): number {
  return Math.round(x / step) * step;
}

function baThread(n: number): ThreadSpec {
  const pitch = roundSignificant(0.9 ** n, 2);
  // d uses the unrounded 0.9ⁿ, as the BS 93 derivation does; for 0–10 BA the rounded pitch
  // gives the same 2 s.f. diameter (checked in the tests).
  const major = roundSignificant(6 * (0.9 ** n) ** 1.2, 2);
  // BS 93 tabulates the basic depth h = 0.6p to the nearest 0.005 mm and derives the effective
  // and minor diameters from that rounded depth (2BA: h 0.486 → 0.485, minor 3.73).
  const depth = roundTo(0.6 * pitch, 0.005);
  return Object.freeze({
    designation: `${n}BA`,
    series: 'BA',
    majorDiameterMm: major,
    pitchMm: pitch,
    tpi: MM_PER_IN / pitch,
    angleDeg: 47.5,
    minorDiameterMm: roundTo(major - 2 * depth, 0.001),
    pitchDiameterMm: roundTo(major - depth, 0.001),
    source: SRC_BA,
  });
}

function isoThread(
  d: number,
  p: number,
  series: 'ISO metric coarse' | 'ISO metric fine',
  choice: '1st' | '2nd',
): ThreadSpec {
  return Object.freeze({
    designation: series === 'ISO metric coarse' ? `M${d}` : `M${d}x${p}`,
    series,
    majorDiameterMm: d,
    pitchMm: p,
    angleDeg: 60,
    minorDiameterMm: d - 1.082532 * p,
    pitchDiameterMm: d - 0.649519 * p,
    choice,
    source: series === 'ISO metric coarse' ? SRC_ISO_COARSE : SRC_ISO_FINE,
  });
}

interface InchSize {
  readonly label: string; // '#10' or '1/4'
  readonly inch: number;
}

function unifiedThread(size: InchSize, tpi: number, series: 'UNC' | 'UNF'): ThreadSpec {
  return Object.freeze({
    designation: `${size.label}-${tpi} ${series}`,
    series,
    majorDiameterMm: size.inch * MM_PER_IN,
    pitchMm: MM_PER_IN / tpi,
    tpi,
    angleDeg: 60,
    minorDiameterMm: (size.inch - 1.082532 / tpi) * MM_PER_IN,
    pitchDiameterMm: (size.inch - 0.649519 / tpi) * MM_PER_IN,
    source: SRC_UNIFIED,
  });
}

function meThread(size: InchSize, tpi: number): ThreadSpec {
  const pitch = MM_PER_IN / tpi;
  const major = size.inch * MM_PER_IN;
  return Object.freeze({
    designation: `${size.label}x${tpi} ME`,
    series: 'ME',
    majorDiameterMm: major,
    pitchMm: pitch,
    tpi,
    angleDeg: 55,
    minorDiameterMm: major - 1.280654 * pitch,
    pitchDiameterMm: major - 0.640327 * pitch,
    source: SRC_ME,
  });
}

const BA_THREADS: readonly ThreadSpec[] = Array.from({ length: 11 }, (_, n) => baThread(n));

// [diameter, coarse pitch, ISO 262 choice] — check-values §2.2 [published].
// prettier-ignore
const ISO_COARSE_ROWS: readonly (readonly [number, number, '1st' | '2nd'])[] = [
  [1.6, 0.35, '1st'], [1.8, 0.35, '2nd'], [2, 0.4, '1st'], [2.2, 0.45, '2nd'],
  [2.5, 0.45, '1st'], [3, 0.5, '1st'], [3.5, 0.6, '2nd'], [4, 0.7, '1st'],
  [4.5, 0.75, '2nd'], [5, 0.8, '1st'], [6, 1, '1st'], [7, 1, '2nd'], [8, 1.25, '1st'],
  [10, 1.5, '1st'], [12, 1.75, '1st'], [14, 2, '2nd'], [16, 2, '1st'], [18, 2.5, '2nd'],
  [20, 2.5, '1st'], [22, 2.5, '2nd'], [24, 3, '1st'],
];

// Common fine pitches, ISO 261: the sizes a model or restoration shop meets, each one in the
// fine and extra-fine columns of the published chart named above (induspecs.com). M3.5 × 0.35,
// M10 × 0.75, M12 × 1 and M24 × 1.5 were held from memory and are left out until a published
// table shows them.
// prettier-ignore
const ISO_FINE_ROWS: readonly (readonly [number, number])[] = [
  [2, 0.25], [2.5, 0.35], [3, 0.35], [4, 0.5], [5, 0.5], [6, 0.75], [8, 1],
  [8, 0.75], [10, 1.25], [10, 1], [12, 1.5], [12, 1.25], [14, 1.5],
  [16, 1.5], [18, 1.5], [20, 1.5], [22, 1.5], [24, 2],
];

const ISO_CHOICE = new Map(ISO_COARSE_ROWS.map(([d, , c]) => [d, c]));

const ISO_THREADS: readonly ThreadSpec[] = [
  ...ISO_COARSE_ROWS.map(([d, p, c]) => isoThread(d, p, 'ISO metric coarse', c)),
  ...ISO_FINE_ROWS.map(([d, p]) => isoThread(d, p, 'ISO metric fine', ISO_CHOICE.get(d) ?? '1st')),
];

const numbered = (n: number): InchSize => ({ label: `#${n}`, inch: 0.06 + 0.013 * n });
const fraction = (num: number, den: number): InchSize => ({
  label: `${num}/${den}`,
  inch: num / den,
});

// [size, UNC TPI, UNF TPI] — check-values §3 [published].
// prettier-ignore
const UNIFIED_ROWS: readonly (readonly [InchSize, number, number])[] = [
  [numbered(2), 56, 64], [numbered(3), 48, 56], [numbered(4), 40, 48], [numbered(5), 40, 44],
  [numbered(6), 32, 40], [numbered(8), 32, 36], [numbered(10), 24, 32], [numbered(12), 24, 28],
  [fraction(1, 4), 20, 28], [fraction(5, 16), 18, 24], [fraction(3, 8), 16, 24],
  [fraction(7, 16), 14, 20], [fraction(1, 2), 13, 20],
];

const UNIFIED_THREADS: readonly ThreadSpec[] = UNIFIED_ROWS.flatMap(([size, unc, unf]) => [
  unifiedThread(size, unc, 'UNC'),
  unifiedThread(size, unf, 'UNF'),
]);

// ME sizes as published, check-values §4: ministeam.net 40 TPI 1/8–1/4 and 32 TPI 9/32–3/8
// (its 1/4 × 32 row carries a published clearance); 3/8 × 40 from the IBLS list. The rest of
// the series as remembered (9/32 and 5/16 × 40, 7/16 and 1/2 × 32) is not served until a
// published table shows it.
const ME_THREADS: readonly ThreadSpec[] = [
  ...(
    [
      [1, 8],
      [5, 32],
      [3, 16],
      [7, 32],
      [1, 4],
      [3, 8],
    ] as const
  ).map(([n, d]) => meThread(fraction(n, d), 40)),
  ...(
    [
      [1, 4],
      [9, 32],
      [5, 16],
      [3, 8],
    ] as const
  ).map(([n, d]) => meThread(fraction(n, d), 32)),
];

const ALL_THREADS: readonly ThreadSpec[] = Object.freeze([
  ...BA_THREADS,
  ...ISO_THREADS,
  ...UNIFIED_THREADS,
  ...ME_THREADS,
]);

/**
 * Every thread held, or those of one series, in table order (smallest first within a series).
 *
 * @example threadCatalogue('BA').map((t) => t.designation) // ['0BA', '1BA', … '10BA']
 */
export function threadCatalogue(series?: ThreadSeries): readonly ThreadSpec[] {
  return series ? ALL_THREADS.filter((t) => t.series === series) : ALL_THREADS;
}

// ---------------------------------------------------------------------------------------------
// Designation parsing

const SAME_IN = TOLERANCES.sameTableSize;

function parseInchSize(text: string): number | undefined {
  const mixed = /^(\d+) (\d+)\/(\d+)$/.exec(text);
  if (mixed) return Number(mixed[1]) + Number(mixed[2]) / Number(mixed[3]);
  const frac = /^(\d+)\/(\d+)$/.exec(text);
  if (frac) return Number(frac[2]) === 0 ? undefined : Number(frac[1]) / Number(frac[2]);
  if (/^\d*\.\d+$/.test(text)) return Number(text);
  return undefined;
}

function fail(code: ThreadErrorCode, message: string, input: string, known?: string[]): never {
  throw new ThreadError(code, message, known ? { input, known } : { input });
}

/**
 * Looks a thread up by the designation a drawing or a shop uses. Accepts `2BA`, `2 BA`, `M5`,
 * `M5x0.5`, `M5 × 0.5`, `1/4-20 UNC`, `1/4-20` (UNC or UNF found from the TPI), `10-32 UNF`,
 * `#10-32`, `No. 10-32`, `1/4x40 ME`, `3/16x40ME`. ME sizes must say `ME`, so a 55° thread is
 * never picked for a Unified one by accident. Throws `ThreadError` with the reason otherwise.
 *
 * @example threadByDesignation('2 BA').pitchMm // 0.81
 * @example threadByDesignation('#10-32').designation // '#10-32 UNF'
 */
export function threadByDesignation(text: string): ThreadSpec {
  const input = text;
  const s = text.trim().replace(/×/g, 'x').replace(/\s+/g, ' ');

  const ba = /^(\d{1,2}) ?BA$/i.exec(s);
  if (ba) {
    const n = Number(ba[1]);
    return (
      BA_THREADS[n] ??
      fail('unknown-size', `${n}BA is outside the BS 93 sizes held here (0–10 BA)`, input)
    );
  }

  const metric = /^M ?(\d+(?:\.\d+)?)(?: ?x ?(\d+(?:\.\d+)?))?$/i.exec(s);
  if (metric) {
    const d = Number(metric[1]);
    const sizes = ISO_THREADS.filter((t) => t.majorDiameterMm === d);
    const coarse = sizes.find((t) => t.series === 'ISO metric coarse');
    if (!coarse) {
      fail('unknown-size', `M${d} is not an ISO metric size held here (M1.6–M24)`, input);
    }
    if (metric[2] === undefined) return coarse;
    const p = Number(metric[2]);
    const match = sizes.find((t) => Math.abs(t.pitchMm - p) < TOLERANCES.sameComputedSize);
    return (
      match ??
      fail(
        'unknown-pitch',
        `M${d} has no ${p} mm pitch here; held: ${sizes.map((t) => t.pitchMm).join(', ')} mm`,
        input,
        sizes.map((t) => t.designation),
      )
    );
  }

  const inch =
    /^(?:(#|No\.? ?)?(\d+)|(\d+ \d+\/\d+|\d+\/\d+|\d*\.\d+))(?: ?(?:"|in))? ?(?:-|x| ) ?(\d+)(?: ?TPI)?(?: ?-? ?(UNC|UNF|ME))?(?: ?-? ?[123][AB])?$/i.exec(
      s,
    );
  if (inch) {
    const tpi = Number(inch[4]);
    const series = inch[5]?.toUpperCase() as 'UNC' | 'UNF' | 'ME' | undefined;
    const isNumbered = inch[2] !== undefined;
    // Without a number the size is written out: the third group matched.
    const sizeIn = isNumbered ? 0.06 + 0.013 * Number(inch[2]) : parseInchSize(inch[3]!);
    const sizeText = isNumbered ? `#${Number(inch[2])}` : inch[3];
    if (sizeIn === undefined)
      fail('unrecognised-designation', `Cannot read size "${sizeText}"`, input);
    const sameSize = (t: ThreadSpec) => Math.abs(t.majorDiameterMm / MM_PER_IN - sizeIn) < SAME_IN;

    if (series === 'ME') {
      if (isNumbered) fail('unknown-size', 'ME sizes are fractional inches, e.g. 1/4x40 ME', input);
      const sizes = ME_THREADS.filter(sameSize);
      if (sizes.length === 0) {
        fail('unknown-size', `${sizeText} in is not an ME size held here (1/8–1/2 in)`, input);
      }
      return (
        sizes.find((t) => t.tpi === tpi) ??
        fail(
          'unknown-pitch',
          `${sizeText} ME is held at ${sizes.map((t) => t.tpi).join(' and ')} TPI, not ${tpi}`,
          input,
          sizes.map((t) => t.designation),
        )
      );
    }

    const sizes = UNIFIED_THREADS.filter(sameSize);
    const match = sizes.find((t) => t.tpi === tpi);
    if (match && (!series || match.series === series)) return match;
    if (match && series) {
      fail(
        'series-mismatch',
        `${sizeText}-${tpi} is ${match.series}, not ${series}`,
        input,
        sizes.map((t) => t.designation),
      );
    }
    if (!isNumbered && !series && ME_THREADS.some((t) => sameSize(t) && t.tpi === tpi)) {
      fail(
        'series-needed',
        `${sizeText}-${tpi} is not Unified; for the 55° Model Engineer thread write ${sizeText}x${tpi} ME`,
        input,
      );
    }
    if (sizes.length === 0) {
      fail('unknown-size', `${sizeText} is not a Unified size held here (#2 to 1/2 in)`, input);
    }
    return fail(
      'unknown-pitch',
      `${sizeText} is ${sizes.map((t) => `${t.tpi} TPI ${t.series}`).join(' or ')}, not ${tpi} TPI${series ? ` ${series}` : ''}`,
      input,
      sizes.map((t) => t.designation),
    );
  }

  return fail(
    'unrecognised-designation',
    `"${text}" is not a thread designation (e.g. 2BA, M5, M5x0.5, 1/4-20 UNC, #10-32, 1/4x40 ME)`,
    input,
  );
}

// ---------------------------------------------------------------------------------------------
// Percent thread

/**
 * Depth that counts as 100 % thread, in mm, per series — the convention each series' charts use:
 * - Unified: %thread = (D − drill)·TPI / 0.01299 (inches), Machinery's Handbook's shop formula,
 *   so 100 % = 1.299/TPI in = 1.299·P [from memory, MH; check-values §3].
 * - ISO metric: the same 60° convention, 100 % = 2 × 0.649519·P = 1.299038·P, so D − P is 77 %
 *   (check-values §2.1). Against the basic internal height (5/8)H it would read 92 %.
 * - BA: against the full BS 93 depth, 100 % = 2 × 0.6p = 1.2p (check-values §1.3).
 * - ME: against the full Whitworth-form depth, 100 % = 2 × 0.640327·P = 1.280654·P (§4).
 */
function fullDepthMm(t: ThreadSpec): number {
  switch (t.series) {
    case 'BA':
      return 1.2 * t.pitchMm;
    case 'ME':
      return 1.280654 * t.pitchMm;
    case 'UNC':
    case 'UNF':
      // 0.01299 in per TPI per 1 %, so 100 % is 1.299/TPI in.
      return (1.299 / (t.tpi as number)) * MM_PER_IN;
    default:
      return 1.299038 * t.pitchMm;
  }
}

export const PERCENT_RULES: Readonly<Record<ThreadSeries, string>> = {
  BA: '%thread = (d − drill) / (1.2·p) × 100 (full BS 93 depth)',
  'ISO metric coarse': '%thread = (D − drill) / (1.299038·P) × 100 (D − P = 77 %)',
  'ISO metric fine': '%thread = (D − drill) / (1.299038·P) × 100 (D − P = 77 %)',
  UNC: '%thread = (D − drill)·TPI / 0.01299, inches (Machinery’s Handbook)',
  UNF: '%thread = (D − drill)·TPI / 0.01299, inches (Machinery’s Handbook)',
  ME: '%thread = (D − drill) / (1.280654·P) × 100 (full 55° Whitworth-form depth)',
};

/**
 * The % thread a drill of `drillMm` leaves for a tap of `thread`, by the series' own rule.
 *
 * @example percentThreadFor(threadByDesignation('1/4-20 UNC'), 0.201 * MM_PER_IN) // ≈ 75.4
 */
export function percentThreadFor(thread: ThreadSpec, drillMm: number): number {
  return ((thread.majorDiameterMm - drillMm) / fullDepthMm(thread)) * 100;
}

// ---------------------------------------------------------------------------------------------
// Published tap drills

interface TableDrill {
  readonly label: string;
  readonly source: string;
}

// Shown to the builder: the standard or "workshop practice". Where each table was checked:
// ISO 2306 6H: [published] utilitiesbunker.com ("75 % thread"), toolcroze.com,
//   aimsindustrial.com.au (check-values §2.2).
// D − P: [published] Wikipedia "ISO metric screw thread" ("the tap drill size can be
//   approximated by subtracting the thread pitch from the major diameter", §2.1), rounded here
//   to the nearest BS 328 stock drill.
// Unified fractional: [published] Machinery’s Handbook 31st ed. Table 4 p. 2168 (§3); numbered:
//   [published] docslib.org/doc/4942776 "75 % thread" column, IBLS wiki (§3).
// BA: Set A [published] ministeam.net/page30.htm; Set B [published] britishfasteners.com;
//   Set C [published] IBLS wiki "Threads" (§1.3). ME: [published] ministeam.net (§4).
const SRC_TAP_ISO = 'ISO 2306 tap drill (6H)';
const SRC_TAP_ISO_RULE = 'Tap drill D − P, nearest stock drill (workshop practice)';
const SRC_TAP_UNIFIED_FRACTIONAL = 'ASME B1.1 commercial tap drill, about 75 % thread';
const SRC_TAP_UNIFIED_NUMBERED = 'ASME B1.1 tap drill, 75 % thread';
const SRC_TAP_BA_A = 'BS 93 tapping drill, about 75 % thread (workshop practice)';
const SRC_TAP_BA_B = 'BS 93 tapping drill (workshop practice)';
const SRC_TAP_BA_C = 'BS 93 tapping drill, number-drill set (workshop practice)';
const SRC_TAP_ME = 'Model Engineer tapping drill (workshop practice)';

const mmLabel = (mm: number) => `${mm} mm`;

// prettier-ignore
const PUBLISHED_TAP: ReadonlyMap<string, TableDrill> = new Map<string, TableDrill>([
  // ISO coarse, check-values §2.2; second-choice and fine sizes by the published D − P rule.
  ...(
    [
      ['M1.6', 1.25], ['M2', 1.6], ['M2.5', 2.05], ['M3', 2.5], ['M3.5', 2.9], ['M4', 3.3],
      ['M5', 4.2], ['M6', 5], ['M8', 6.8], ['M10', 8.5], ['M12', 10.2], ['M14', 12],
      ['M16', 14], ['M20', 17.5], ['M24', 21],
    ] as const
  ).map(([d, mm]) => [d, { label: mmLabel(mm), source: SRC_TAP_ISO }] as const),
  ...(
    [
      ['M1.8', 1.45], ['M2.2', 1.75], ['M4.5', 3.7], ['M7', 6], ['M18', 15.5], ['M22', 19.5],
      ['M3x0.35', 2.65], ['M4x0.5', 3.5], ['M5x0.5', 4.5], ['M6x0.75', 5.2], ['M8x1', 7],
      ['M10x1.25', 8.8], ['M10x1', 9], ['M12x1.5', 10.5], ['M12x1.25', 10.8],
    ] as const
  ).map(([d, mm]) => [d, { label: mmLabel(mm), source: SRC_TAP_ISO_RULE }] as const),
  // Unified 75 % set, check-values §3.
  ...(
    [
      ['#2-56 UNC', '#50'], ['#2-64 UNF', '#50'], ['#3-48 UNC', '#47'], ['#3-56 UNF', '#45'],
      ['#4-40 UNC', '#43'], ['#4-48 UNF', '#42'], ['#5-40 UNC', '#38'], ['#5-44 UNF', '#37'],
      ['#6-32 UNC', '#36'], ['#6-40 UNF', '#33'], ['#8-32 UNC', '#29'], ['#8-36 UNF', '#29'],
      ['#10-24 UNC', '#25'], ['#10-32 UNF', '#21'], ['#12-24 UNC', '#16'], ['#12-28 UNF', '#14'],
    ] as const
  ).map(([d, label]) => [d, { label, source: SRC_TAP_UNIFIED_NUMBERED }] as const),
  ...(
    [
      ['1/4-20 UNC', '#7'], ['1/4-28 UNF', '#3'], ['5/16-18 UNC', 'F'], ['5/16-24 UNF', 'I'],
      ['3/8-16 UNC', '5/16"'], ['3/8-24 UNF', 'Q'], ['7/16-14 UNC', 'U'],
      ['7/16-20 UNF', '25/64"'], ['1/2-13 UNC', '27/64"'], ['1/2-20 UNF', '29/64"'],
    ] as const
  ).map(([d, label]) => [d, { label, source: SRC_TAP_UNIFIED_FRACTIONAL }] as const),
  // BA, check-values §1.3: Set A for 0–2 BA, Set B for 4–10 BA, 3BA from Set C (IBLS #29;
  // the 3.4 mm once held here was from memory).
  ...([['0BA', 5.1], ['1BA', 4.5], ['2BA', 4]] as const).map(
    ([d, mm]) => [d, { label: mmLabel(mm), source: SRC_TAP_BA_A }] as const,
  ),
  ['3BA', { label: '#29', source: SRC_TAP_BA_C }],
  ...(
    [['4BA', 3], ['5BA', 2.65], ['6BA', 2.3], ['7BA', 2.05], ['8BA', 1.8], ['9BA', 1.55], ['10BA', 1.4]] as const
  ).map(([d, mm]) => [d, { label: mmLabel(mm), source: SRC_TAP_BA_B }] as const),
  // ME, check-values §4 (ministeam). 9/32 × 32 is drilled with E (6.35 mm = 1/4 in).
  ...(
    [
      ['1/8x40 ME', 2.6], ['5/32x40 ME', 3.3], ['3/16x40 ME', 4.1], ['7/32x40 ME', 5],
      ['1/4x40 ME', 5.8], ['9/32x32 ME', 6.35], ['5/16x32 ME', 7.15], ['3/8x32 ME', 8.75],
    ] as const
  ).map(([d, mm]) => [d, { label: mmLabel(mm), source: SRC_TAP_ME }] as const),
]);

/** Resolves a table label to a size: a stock drill label, or `n mm` for sizes off the stock grid. */
function recommendation(label: string, source: string): DrillRecommendation {
  const stock = drillByLabel(label);
  if (stock) return { label: stock.label, mm: stock.mm, inch: stock.inch, source };
  const mm = Number(/^(\d+(?:\.\d+)?) mm$/.exec(label)?.[1]);
  return { label, mm, inch: mm / MM_PER_IN, source };
}

function resolveThread(thread: ThreadSpec | string): ThreadSpec {
  return typeof thread === 'string' ? threadByDesignation(thread) : thread;
}

/** A drill set as a builder says it: `numberLetter` reads "number and letter". */
export function drillSetWords(set: DrillSetName | string): string {
  const words: Record<string, string> = {
    numberLetter: 'number and letter',
    metricTenths: 'metric (0.1 mm steps)',
    inch: 'number, letter and fractional',
    all: 'any',
  };
  return words[set] ?? set;
}

function defaultDrillSet(t: ThreadSpec): DrillSetName {
  // Unified work is drilled with number, letter and fractional drills; BA, ME and metric with
  // metric drills, as the model-engineering charts do.
  return t.series === 'UNC' || t.series === 'UNF' ? 'inch' : 'metric';
}

/**
 * The tap drill for a target % thread: the theoretical size by the series' rule, the nearest
 * stock drill in `drillSet` (default: metric for BA, ME and ISO; number/letter/fractional for
 * Unified) with the % thread it really cuts, and the published chart drill where one is held.
 *
 * The ISO rule and the published ISO 2306 drills part at M12: 75 % gives 10.295 → 10.3 mm
 * (74.8 %), the chart's 10.2 mm cuts 79 %; likewise M14 12.05 → 12.1 mm against the chart's
 * 12.0 mm. M8 gives 6.782 → 6.8 mm, as the chart does. Both answers are returned.
 *
 * @example tapDrillFor('1/4-20 UNC').stock.label // '#7'
 * @example tapDrillFor('2BA').stock.mm // 4
 */
export function tapDrillFor(
  thread: ThreadSpec | string,
  percentThread = 75,
  drillSet?: DrillSetName,
): TapDrillAnswer {
  const t = resolveThread(thread);
  if (!Number.isFinite(percentThread) || percentThread <= 0 || percentThread > 100) {
    throw new ThreadError(
      'invalid-percent',
      `Percent thread must be above 0 and at most 100, not ${percentThread}`,
      { input: String(percentThread) },
    );
  }
  const theoreticalMm = t.majorDiameterMm - (fullDepthMm(t) * percentThread) / 100;
  const set = drillSet ?? defaultDrillSet(t);
  const drill = nearestDrill(theoreticalMm, set);
  const table = PUBLISHED_TAP.get(t.designation);
  const published = table && recommendation(table.label, table.source);
  return {
    thread: t,
    targetPercent: percentThread,
    theoreticalMm,
    rule: PERCENT_RULES[t.series],
    stock: { ...drill, percentThread: percentThreadFor(t, drill.mm) },
    ...(published && {
      published: { ...published, percentThread: percentThreadFor(t, published.mm) },
    }),
    source: `${PERCENT_RULES[t.series]}; nearest ${drillSetWords(set)} stock drill; ${t.source}`,
  };
}

// ---------------------------------------------------------------------------------------------
// Clearance drills

// Where each clearance was checked: ISO 273 [published] utilitiesbunker.com "Close H11 / Free
// H12" (check-values §2.2) and, for M7, engineeringhardware.com "Clearance Hole Sizes conform
// to ISO 273" (searched for issue 16). Unified [published] docslib.org/doc/4942776 (§3). BA
// Set C [published] IBLS wiki "Threads"; Set A [published] ministeam.net/page30.htm (§1.3). ME
// [published] ministeam.net (§4). The close-fit rule D + 0.1 mm is workshop practice
// ([common practice, no source]).
const SRC_ISO_273 = 'ISO 273 fine (close) / medium (free)';
const SRC_CLEAR_UNIFIED = 'Close fit / free fit, number and letter drills (workshop practice)';
const SRC_CLEAR_BA_C = 'BS 93 clearance, number drill (workshop practice)';
const SRC_CLEAR_BA_A = 'BS 93 clearance (workshop practice)';
const SRC_CLEAR_ME = 'Model Engineer clearance (workshop practice)';
const SRC_CLEAR_CLOSE_RULE =
  'Close fit: smallest metric stock drill at least D + 0.1 mm (workshop practice)';

// ISO 273 by nominal diameter: [close, free] mm. M1.6 is 1.8/2.0 as published in check-values
// §2.2 (the author's memory of ISO 273 has 1.7/1.8; we keep the published pair).
// prettier-ignore
const ISO_273: ReadonlyMap<number, readonly [number, number, string]> = new Map<
  number,
  readonly [number, number, string]
>([
  ...(
    [
      [1.6, 1.8, 2], [2, 2.2, 2.4], [2.5, 2.7, 2.9], [3, 3.2, 3.4], [3.5, 3.7, 3.9], [4, 4.3, 4.5],
      [5, 5.3, 5.5], [6, 6.4, 6.6], [8, 8.4, 9], [10, 10.5, 11], [12, 13, 13.5], [14, 15, 15.5],
      [16, 17, 17.5], [20, 21, 22], [24, 25, 26],
    ] as const
  ).map(([d, c, f]) => [d, [c, f, SRC_ISO_273]] as const),
  // M7 7.4/7.6 [published] engineeringhardware.com (ISO 273). M1.8, M4.5, M18 and M22 are
  // [from memory] and M2.2 follows its neighbours: not yet checked against a published table
  // (issue 16 left them standing rather than guess other figures).
  ...(
    [[1.8, 2, 2.1], [2.2, 2.4, 2.6], [4.5, 4.8, 5], [7, 7.4, 7.6], [18, 19, 20], [22, 23, 24]] as const
  ).map(([d, c, f]) => [d, [c, f, SRC_ISO_273]] as const),
]);

// Unified close/free by size label, check-values §3 [published].
// prettier-ignore
const UNIFIED_CLEARANCE: ReadonlyMap<string, readonly [string, string]> = new Map([
  ['#2', ['#43', '#41']], ['#3', ['#37', '#35']], ['#4', ['#32', '#30']], ['#5', ['#30', '#29']],
  ['#6', ['#27', '#25']], ['#8', ['#18', '#16']], ['#10', ['#9', '#7']], ['#12', ['#2', '#1']],
  ['1/4', ['F', 'H']], ['5/16', ['P', 'Q']], ['3/8', ['W', 'X']],
  ['7/16', ['29/64"', '15/32"']], ['1/2', ['33/64"', '17/32"']],
] as const);

// BA [close, close source, free, free source], check-values §1.3. The 3–10 BA free fits are the
// upper end of the "typical ME clearance" column, [from memory] in the reference: not yet
// checked against a published table. The sources give one
// clearance each; the smaller of the published pair is the close fit. 1BA: ministeam's 5.5 mm
// is smaller than IBLS's #2, so the two swap roles there.
const BA_CLEARANCE: readonly (readonly [string, string, string, string])[] = [
  ['C', SRC_CLEAR_BA_C, '6.2 mm', SRC_CLEAR_BA_A],
  ['5.5 mm', SRC_CLEAR_BA_A, '#2', SRC_CLEAR_BA_C],
  ['#12', SRC_CLEAR_BA_C, '4.9 mm', SRC_CLEAR_BA_A],
  ['#19', SRC_CLEAR_BA_C, '4.3 mm', SRC_CLEAR_BA_A],
  ['#27', SRC_CLEAR_BA_C, '3.8 mm', SRC_CLEAR_BA_A],
  ['#30', SRC_CLEAR_BA_C, '3.4 mm', SRC_CLEAR_BA_A],
  ['#34', SRC_CLEAR_BA_C, '3 mm', SRC_CLEAR_BA_A],
  ['#38', SRC_CLEAR_BA_C, '2.6 mm', SRC_CLEAR_BA_A],
  ['#43', SRC_CLEAR_BA_C, '2.3 mm', SRC_CLEAR_BA_A],
  ['#47', SRC_CLEAR_BA_C, '2 mm', SRC_CLEAR_BA_A],
  ['#50', SRC_CLEAR_BA_C, '1.8 mm', SRC_CLEAR_BA_A],
];

// ME free clearance by diameter label (ministeam; the same hole serves 40 and 32 TPI, and
// 7/16 and 1/2 come from its 26 TPI rows).
// prettier-ignore
const ME_CLEARANCE: ReadonlyMap<string, number> = new Map([
  ['1/8', 3.5], ['5/32', 4.2], ['3/16', 5], ['7/32', 5.8], ['1/4', 6.6], ['9/32', 7.5],
  ['5/16', 8.2], ['3/8', 9.8], ['7/16', 11.5], ['1/2', 13.1],
]);

/**
 * Close and free clearance drills for a thread: ISO 273 fine/medium for metric, the published
 * close/free table for Unified, the published model-engineering clearances for BA (IBLS and
 * ministeam) and ME (ministeam free; close = first metric stock drill ≥ D + 0.1 mm).
 *
 * @example clearanceFor('M6').free.mm // 6.6
 * @example clearanceFor('1/4-20 UNC').close.label // 'F'
 */
export function clearanceFor(thread: ThreadSpec | string): ClearanceAnswer {
  const t = resolveThread(thread);
  let close: DrillRecommendation;
  let free: DrillRecommendation;
  switch (t.series) {
    case 'ISO metric coarse':
    case 'ISO metric fine': {
      const [c, f, src] = ISO_273.get(t.majorDiameterMm) as readonly [number, number, string];
      close = recommendation(mmLabel(c), src);
      free = recommendation(mmLabel(f), src);
      break;
    }
    case 'UNC':
    case 'UNF': {
      const size = t.designation.split('-')[0]!; // split answers at least one part
      const [c, f] = UNIFIED_CLEARANCE.get(size) as readonly [string, string];
      close = recommendation(c, SRC_CLEAR_UNIFIED);
      free = recommendation(f, SRC_CLEAR_UNIFIED);
      break;
    }
    case 'BA': {
      const [c, cSrc, f, fSrc] = BA_CLEARANCE[Number.parseInt(t.designation, 10)]!;
      close = recommendation(c, cSrc);
      free = recommendation(f, fSrc);
      break;
    }
    case 'ME': {
      const size = t.designation.split('x')[0]!;
      const stock = nearestDrill(t.majorDiameterMm + 0.1, 'metric', { mode: 'atLeast' });
      close = { label: stock.label, mm: stock.mm, inch: stock.inch, source: SRC_CLEAR_CLOSE_RULE };
      free = recommendation(mmLabel(ME_CLEARANCE.get(size) as number), SRC_CLEAR_ME);
      break;
    }
  }
  return { thread: t, close, free, source: `close: ${close.source}; free: ${free.source}` };
}
