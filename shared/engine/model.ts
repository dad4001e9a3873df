/**
 * The model format v1 (also the project export format) as a zod schema, and the implied
 * tolerance rules that give a tolerance to a value written without one.
 */
import { z } from 'zod';
import { EXPRESSION_LIMITS } from './expression';
import { convertLength, type ModelUnit } from './length';
import { quantityIn, type Quantity } from './quantity';

/**
 * How large a model may be. A whole locomotive's drawing set has a few hundred to a couple of
 * thousand dimensions and a few hundred holes; the limits leave about five times that. They
 * keep one saved or posted model from holding the solver (and every page that solves it) for
 * long: a solve grows with the dimensions, relations and holes, and a Monte Carlo with samples ×
 * dimensions. The engine's own benchmarks (10,000 dimensions) stay inside them.
 */
export const MODEL_LIMITS = Object.freeze({
  dimensions: 10_000,
  relations: 10_000,
  parts: 1_000,
  features: 5_000,
  /** Holes of all features, each hole of a pattern counted: each is two positions to solve. */
  holes: 20_000,
  /** Characters of a relation (see EXPRESSION_LIMITS for depth and arguments). */
  relationCharacters: EXPRESSION_LIMITS.relationCharacters,
  /** Characters of a position, size or depth expression. */
  expressionCharacters: EXPRESSION_LIMITS.characters,
  /**
   * Samples × dimensions of one Monte Carlo on the server: each sample re-solves the model, so
   * this bounds its time (20,000 samples of a 100-dimension model, 2,000 of a 1,000-dimension one).
   */
  monteCarloWork: 2_000_000,
});
export type ModelLimit = keyof typeof MODEL_LIMITS;

/**
 * What a refused limit carries in its zod issue's `params`: the limit's name, and whether the
 * text is too large ('size') or asks for too much work ('work'), so the server can answer
 * 413 or 422 rather than a plain 400.
 */
export interface LimitIssueParams {
  limit: ModelLimit;
  kind: 'size' | 'work';
}

const thousands = (n: number) => n.toLocaleString('en-GB');

/**
 * The refinement arguments that hold a string's or array's length to a limit. `when` runs it
 * also when items inside have issues of their own: an oversized model is refused as such.
 */
export function lengthLimit(limit: ModelLimit, owner: string, noun: string) {
  const max = MODEL_LIMITS[limit];
  const params: LimitIssueParams = { limit, kind: 'size' };
  return [
    (v: { length: number }) => v.length <= max,
    {
      params,
      when: (p: { value: unknown }) => typeof p.value === 'string' || Array.isArray(p.value),
      error: (iss: { input?: unknown }) =>
        `${owner} has at most ${thousands(max)} ${noun}; this one has ${thousands((iss.input as { length: number }).length)}`,
    },
  ] as const;
}

/**
 * Dimension names are identifiers, optionally qualified by a part: `bolt_x` or
 * `hornblock.bolt_x` (so relations can cross parts without name clashes).
 */
export const DIMENSION_NAME = /^[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_][A-Za-z0-9_]*)?$/;

/** A value: a number in the model unit, or a written quantity such as `1 3/16"` or `3.175 mm`. */
const valueSchema = z.union([z.number().finite(), z.string().trim().min(1, 'value is empty')]);

const quantityKind = z.enum(['length', 'angle', 'count']);

const common = {
  name: z
    .string()
    .regex(
      DIMENSION_NAME,
      'a name is a letter or _ followed by letters, digits or _, optionally part.name',
    ),
  quantity: quantityKind.default('length'),
  label: z.string().optional(),
  part: z.string().optional(),
  note: z.string().optional(),
  sheet: z.string().optional(),
};

const givenKinds = ['stated', 'scaled', 'assumed', 'asbuilt'] as const;

const givenDimension = z
  .object({
    ...common,
    kind: z.enum(givenKinds),
    value: valueSchema,
    tol: valueSchema.optional(),
    tolMinus: valueSchema.optional(),
    tolPlus: valueSchema.optional(),
  })
  .refine((d) => !(d.tol !== undefined && (d.tolMinus !== undefined || d.tolPlus !== undefined)), {
    message: 'give either tol or tolMinus/tolPlus, not both',
  })
  .refine((d) => (d.tolMinus === undefined) === (d.tolPlus === undefined), {
    message: 'tolMinus and tolPlus go together',
  });

const derivedDimension = z.object({
  ...common,
  kind: z.literal('derived'),
  /** Starting point for a non-linear block (picks which root, e.g. which side of a circle). */
  guess: valueSchema.optional(),
});

// A discriminated union reads a large model several times faster than a plain union.
export const dimensionSchema = z.discriminatedUnion('kind', [givenDimension, derivedDimension]);

export const relationSchema = z.object({
  id: z.string().min(1, 'a relation needs an id'),
  expr: z.string().refine(...lengthLimit('relationCharacters', 'a relation', 'characters')),
  enabled: z.boolean().default(true),
  note: z.string().optional(),
});

/**
 * Implied tolerances for values written without one. Editable per project.
 * Inch rules are common title-block practice (no published source). Millimetre rules are
 * ISO 2768-1 class m (medium) linear tolerances by nominal size, recalled from memory, not
 * checked against the standard. A scaled value is as good as the print and the ruler:
 * 0.5 % of its length, at least 0.5 mm (our choice). An assumed value is exact (0): the
 * builder chose it, so it carries no drawing uncertainty unless a tolerance is given.
 */
export const toleranceDefaultsSchema = z.object({
  inchFraction: z
    .number()
    .nonnegative()
    .default(1 / 64),
  /** By places after the point: [1-place, 2-place, 3-place, 4-place]. */
  inchDecimal: z.array(z.number().nonnegative()).length(4).default([0.1, 0.01, 0.005, 0.0005]),
  /** ISO 2768-1 m: ascending `upTo` (mm) with its ± tolerance (mm). */
  mmRanges: z
    .array(z.object({ upTo: z.number().positive(), tol: z.number().nonnegative() }))
    .min(1)
    .default([
      { upTo: 6, tol: 0.1 },
      { upTo: 30, tol: 0.2 },
      { upTo: 120, tol: 0.3 },
      { upTo: 400, tol: 0.5 },
      { upTo: 1000, tol: 0.8 },
      { upTo: 2000, tol: 1.2 },
      { upTo: 4000, tol: 2 },
    ]),
  angleDeg: z.number().nonnegative().default(0.5),
  scaledFraction: z.number().nonnegative().default(0.005),
  scaledMinMm: z.number().nonnegative().default(0.5),
  assumed: z.number().nonnegative().default(0),
});

const identifier = z
  .string()
  .regex(/^[A-Za-z_][A-Za-z0-9_]*$/, 'an id is a letter or _ followed by letters, digits or _');

/** An expression over dimension names (`horn1_x - horn_gap / 2`), or a number in the model unit. */
const positionExpr = z.union([
  z.number().finite(),
  z
    .string()
    .trim()
    .min(1, 'give a position')
    .refine(...lengthLimit('expressionCharacters', 'an expression', 'characters')),
]);

/**
 * A part of the project: what is machined, from what, how many, and whether it is machined
 * together with others as one stack (so shared features line up by construction).
 */
export const partSchema = z.object({
  id: identifier,
  name: z.string().trim().min(1),
  /** A material id of the surface-speed table (shop-math.ts), e.g. `mild-steel`, `brass`. */
  material: z.string().default('mild-steel'),
  quantity: z.number().int().positive().default(1),
  /** Parts with the same stack id are drilled together as one stack. */
  stack: identifier.optional(),
  /** Boilers, steam pipes, safety valves: figures must be written or approved, not scaled. */
  pressure: z.boolean().default(false),
  /** Which stock drills the shop has, for the nearest-drill suggestions. */
  drillSet: z.enum(['metric', 'numberLetter', 'fractional']).default('metric'),
  /** The part's outline from its datum (bottom-left), for the part view. */
  width: positionExpr.optional(),
  height: positionExpr.optional(),
  notes: z.string().optional(),
});

const circlePattern = z.object({
  type: z.literal('circle'),
  count: z.number().int().min(2).max(360),
  /** Pitch circle diameter. */
  pcd: positionExpr,
  /** First hole, degrees counter-clockwise from +X. */
  startDeg: z.number().finite().default(0),
});

const rowPattern = z.object({
  type: z.literal('row'),
  count: z.number().int().min(2).max(500),
  pitch: positionExpr,
  /** Direction of the row, degrees counter-clockwise from +X. */
  angleDeg: z.number().finite().default(0),
});

/**
 * A feature of a part, positioned from the part's datum by expressions over the model's
 * dimensions. A pattern (pitch circle or row) expands to one position per hole, with the
 * feature's X/Y as the circle's centre or the row's first hole.
 */
export const featureSchema = z.object({
  id: identifier,
  part: identifier,
  kind: z.enum(['hole', 'tapped', 'slot', 'pocket', 'edge']),
  label: z.string().optional(),
  x: positionExpr,
  y: positionExpr,
  /** A drill by label or size: `#29`, `F`, `7/64`, `3.3 mm`. */
  drill: z.string().trim().min(1).optional(),
  /** A thread designation: `6BA`, `M4`, `1/8x40 ME`, `10-32 UNF`. Tapped holes cut it; */
  thread: z.string().trim().min(1).optional(),
  /** Clearance holes for a thread take its close or free clearance drill. */
  clearance: z.enum(['close', 'free']).optional(),
  /** Target % thread for the tap drill (common practice: 75 %). */
  percentThread: z.number().min(40).max(100).default(75),
  depth: z.union([z.literal('through'), positionExpr]).default('through'),
  /** Slot or pocket size. */
  width: positionExpr.optional(),
  length: positionExpr.optional(),
  pattern: z.discriminatedUnion('type', [circlePattern, rowPattern]).optional(),
  note: z.string().optional(),
});

export const modelSchema = z.object({
  format: z.literal('fairsheet.model'),
  version: z.literal(1),
  units: z.enum(['in', 'mm']),
  dimensions: z
    .array(dimensionSchema)
    .refine(...lengthLimit('dimensions', 'a model', 'dimensions')),
  relations: z
    .array(relationSchema)
    .refine(...lengthLimit('relations', 'a model', 'relations'))
    .default([]),
  defaults: toleranceDefaultsSchema.partial().optional(),
  /** Parts and their features (optional: a model may be dimensions and relations only). */
  parts: z
    .array(partSchema)
    .refine(...lengthLimit('parts', 'a model', 'parts'))
    .default([]),
  features: z
    .array(featureSchema)
    .refine(...lengthLimit('features', 'a model', 'features'))
    .refine((features) => holeCount(features) <= MODEL_LIMITS.holes, {
      params: { limit: 'holes', kind: 'size' } satisfies LimitIssueParams,
      // Only over features that read: a pattern's own count limit speaks for a wild count.
      when: (p) => p.issues.length === 0,
      error: (iss) =>
        `a model has at most ${thousands(MODEL_LIMITS.holes)} holes, each hole of a pattern counted; this one has ${thousands(holeCount(iss.input as ModelFeature[]))}`,
    })
    .default([]),
});

/** Holes of all features, a pattern's counted one by one. */
function holeCount(features: ReadonlyArray<{ pattern?: { count: number } }>): number {
  let n = 0;
  for (const f of features) n += f.pattern?.count ?? 1;
  return n;
}

/** A model as read (defaults filled in). */
export type FairsheetModel = z.infer<typeof modelSchema>;
/** A model as written (optional fields may be missing). */
export type FairsheetModelInput = z.input<typeof modelSchema>;
export type ModelDimension = z.infer<typeof dimensionSchema>;
export type ModelRelation = z.infer<typeof relationSchema>;
export type ToleranceDefaults = z.infer<typeof toleranceDefaultsSchema>;
export type DimensionKind = ModelDimension['kind'];
export type QuantityKind = z.infer<typeof quantityKind>;
export type ModelPart = z.infer<typeof partSchema>;
export type ModelFeature = z.infer<typeof featureSchema>;

/**
 * The full defaults table, with a model's overrides applied.
 *
 * @example toleranceDefaults({ angleDeg: 1 }).inchFraction // 0.015625
 */
export function toleranceDefaults(overrides?: Partial<ToleranceDefaults>): ToleranceDefaults {
  return toleranceDefaultsSchema.parse(overrides ?? {});
}

/**
 * The tolerance a stated value carries from how it is written, in the model unit (degrees for
 * angles). Inch-family values use the inch table, millimetre-family values the ISO 2768-m
 * table, a plain number the table of the model unit. Thou count as inch decimals
 * (15 thou = 0.015, three places). Whole inches take the fraction rule; beyond four places the
 * decimal rule continues as 5·10⁻ⁿ (our extension of the table).
 *
 * @example impliedTolerance(parseQuantity('3/16'), 'length', 'in', toleranceDefaults()) // 0.015625
 * @example impliedTolerance(parseQuantity('0.750'), 'length', 'in', toleranceDefaults()) // 0.005
 * @example impliedTolerance(parseQuantity('25 mm'), 'length', 'mm', toleranceDefaults()) // 0.2
 */
export function impliedTolerance(
  q: Quantity,
  quantity: QuantityKind,
  unit: ModelUnit,
  defaults: ToleranceDefaults,
): number {
  if (quantity === 'count') return 0;
  if (quantity === 'angle') return defaults.angleDeg;
  const family: ModelUnit = q.exact.base === 'plain' ? unit : q.exact.base === 'mm' ? 'mm' : 'in';
  if (family === 'in') {
    // The schema holds exactly four inch places (1 to 4), read here by their number.
    let tolIn: number;
    if (q.form === 'decimal' || q.unit === 'thou') {
      const places = q.decimals + (q.unit === 'thou' ? 3 : 0);
      if (places === 0) tolIn = defaults.inchFraction;
      else if (places <= 4) tolIn = defaults.inchDecimal[places - 1]!;
      else tolIn = 5 * 10 ** -places;
    } else if (q.form === 'feet-inches' && q.decimals > 0) {
      tolIn = q.decimals <= 4 ? defaults.inchDecimal[q.decimals - 1]! : 5 * 10 ** -q.decimals;
    } else {
      tolIn = defaults.inchFraction;
    }
    return convertLength(tolIn, 'in', unit);
  }
  const mm = Math.abs(quantityIn(q, 'mm'));
  const ranges = defaults.mmRanges;
  // Past the last range the last one holds; the schema requires at least one.
  const row = ranges.find((r) => mm <= r.upTo) ?? ranges[ranges.length - 1]!;
  return convertLength(row.tol, 'mm', unit);
}

/**
 * The tolerance of a scaled value with none given: a fraction of its length, with a floor.
 *
 * @example scaledTolerance(100, 'mm', toleranceDefaults()) // 0.5
 */
export function scaledTolerance(
  value: number,
  unit: ModelUnit,
  defaults: ToleranceDefaults,
): number {
  const floor = convertLength(defaults.scaledMinMm, 'mm', unit);
  return Math.max(Math.abs(value) * defaults.scaledFraction, floor);
}
