import { z } from 'zod';

/** The shop sheet: what the workshop cuts, per part (a stack once with its parts). */

export const paperSize = z.enum(['a4', 'letter']);
export type PaperSize = z.infer<typeof paperSize>;

export const shopSheetPdfQuery = z.object({ paper: paperSize.default('a4') });

const lengthCell = z.object({
  /** In the model unit; null when the position is open. */
  value: z.number().nullable(),
  /** The same in the other unit. */
  other: z.number().nullable(),
  /** Formatted, model unit (`7.3125`) and other unit (`185.738`); `—` when the position is open. */
  text: z.string(),
  otherText: z.string(),
});

export const shopSheetCheckState = z.enum(['checked', 'void', 'not-checked']);

const check = z.object({
  state: shopSheetCheckState,
  /** `checked by Jo Penrose`, `CHECK VOID`, `not checked`. */
  text: z.string(),
  checkers: z.array(z.string()),
});

export const shopSheetRow = z.object({
  feature: z.string(),
  part: z.string(),
  label: z.string(),
  kind: z.enum(['hole', 'tapped', 'slot', 'pocket', 'edge']),
  x: lengthCell,
  y: lengthCell,
  /** Size or thread: `4BA clearance, close`, `6BA tapped`, `3/8" drill`, `slot 2.2500 × 2.1250`. */
  size: z.string(),
  /** `#31 · 3.048 mm · 70 %`, or empty. */
  tapDrill: z.string(),
  /** `3.7 mm (close; chart #27)`, or empty. */
  clearance: z.string(),
  /** The drill that makes the hole, or empty. */
  drill: z.string(),
  rpm: z.number().nullable(),
  depth: z.string(),
  /** ± worst case of the position (the larger of X and Y), model unit. */
  tolerance: z.string(),
  toleranceValue: z.number().nullable(),
  /** `derived (stated, scaled)`, `stated`, `on datum`. */
  provenance: z.string(),
  check,
  warnings: z.array(z.string()),
  errors: z.array(z.string()),
});
export type ShopSheetRow = z.infer<typeof shopSheetRow>;

export const shopSheetDrill = z.object({
  drill: z.string(),
  mm: z.number(),
  inch: z.number(),
  material: z.string(),
  vcMPerMin: z.number(),
  rpm: z.number(),
  holes: z.number().int(),
  source: z.string(),
});
export type ShopSheetDrill = z.infer<typeof shopSheetDrill>;

export const shopSheetPart = z.object({
  id: z.string(),
  name: z.string(),
  material: z.string(),
  quantity: z.number().int(),
  pressure: z.boolean(),
  drillSet: z.string(),
  notes: z.string().nullable(),
  /** Outline from the datum, model unit (for the drawing of the part). */
  width: z.number().nullable(),
  height: z.number().nullable(),
});

export const shopSheetGroup = z.object({
  id: z.string(),
  /** `Frame plate, left + Frame plate, right (stack frames)` or the part's name. */
  title: z.string(),
  stack: z.string().nullable(),
  parts: z.array(shopSheetPart),
  pressure: z.boolean(),
  check,
  rows: z.array(shopSheetRow),
  drills: z.array(shopSheetDrill),
  /** For the inspector: features resting on scaled or assumed values. */
  pressureFeatures: z.array(z.object({ label: z.string(), restsOn: z.string() })),
  cautions: z.array(z.string()),
});
export type ShopSheetGroup = z.infer<typeof shopSheetGroup>;

export const shopSheetCorrection = z.object({
  sheet: z.string().nullable().optional(),
  dimension: z.string().nullable().optional(),
  wrong: z.string(),
  corrected: z.string(),
  reason: z.string().optional(),
  by: z.string().nullable().optional(),
  date: z.string().optional(),
});
export type ShopSheetCorrection = z.infer<typeof shopSheetCorrection>;

export const shopSheet = z.object({
  project: z.object({ id: z.string(), name: z.string(), modelScale: z.string().nullable() }),
  revision: z.number().int(),
  /** ISO date-time of the revision. */
  date: z.string(),
  derivedBy: z.string().nullable(),
  units: z.enum(['in', 'mm']),
  otherUnits: z.enum(['in', 'mm']),
  /** The drawing's own solve status. */
  status: z.string(),
  order: z.string(),
  corrections: z.array(shopSheetCorrection),
  /** On every sheet: derived values are inferences; machine-shop safety. */
  cautions: z.array(z.string()),
  groups: z.array(shopSheetGroup),
});
export type ShopSheet = z.infer<typeof shopSheet>;

/** The CSV's columns, in order (one row per hole). */
export const SHOP_SHEET_CSV_COLUMNS = [
  'group',
  'part',
  'feature',
  'label',
  'kind',
  'x_in',
  'y_in',
  'x_mm',
  'y_mm',
  'size',
  'tap_drill',
  'clearance',
  'drill',
  'rpm',
  'depth',
  'tolerance',
  'provenance',
  'check',
  'warnings',
] as const;
