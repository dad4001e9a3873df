/** The answer of `evaluateFeatures`: parts, features, their rows and the shop's groups. */
import type { DimensionKind, ModelFeature, ModelPart } from '../model';
import type { ModelUnit } from '../length';
import type { Contributor, SolveStatus } from '../result';
import type { DrillRecommendation, ThreadSeries } from '../threads';
import type { StockDrill } from '../drills';

/** Given kinds a position can rest on. */
export type GivenKind = Exclude<DimensionKind, 'derived'>;

/**
 * Where a coordinate comes from: the kind of the given dimension it names directly, `derived`
 * for an expression (or a derived name), `datum` for a literal 0 (the datum itself), and
 * `assumed` for any other number typed on the feature (the builder's choice, not the drawing's).
 */
export type Provenance = DimensionKind | 'datum';

/** One evaluated length (a coordinate, a pitch circle, a depth), in the model unit. */
export interface FeatureLength {
  /** As written on the feature, or a description for an expanded pattern hole. */
  readonly expr: string;
  readonly value: number | null;
  /** ± worst case Σ|sᵢ|·tᵢ; 0 for a literal. */
  readonly worstCase: number | null;
  /** ± RSS √Σ(sᵢ·tᵢ)². */
  readonly rss: number | null;
  readonly provenance: Provenance;
  /** The kinds of the given values it rests on, in the order stated, scaled, assumed, as-built. */
  readonly restsOn: readonly GivenKind[];
  /** The given dimensions it rests on (user names only), largest share first. */
  readonly contributors: readonly Contributor[];
}

/** One row of the ordinate table: a single hole or feature position. */
export interface FeatureRow {
  readonly feature: string;
  readonly part: string;
  /** Hole number within a pattern (0-based), or null for a single feature. */
  readonly index: number | null;
  /** `label`, or `label 3/6` for a pattern hole. */
  readonly label: string;
  readonly x: FeatureLength;
  readonly y: FeatureLength;
}

export type FeatureIssueCode =
  | 'schema'
  | 'duplicate-id'
  | 'unknown-part'
  | 'unknown-material'
  | 'unknown-thread'
  | 'missing-thread'
  | 'unreadable-drill'
  | 'expression'
  | 'unknown-name'
  | 'unit-mismatch'
  | 'unsolved'
  | 'pressure';

/** A problem with one feature (or part), reported beside it, never thrown. */
export interface FeatureIssue {
  readonly code: FeatureIssueCode;
  readonly message: string;
  readonly feature?: string;
  readonly part?: string;
  /** Which field: `x`, `y`, `pcd`, `pitch`, `depth`, `width`, `length`, `thread`, `drill`. */
  readonly field?: string;
  /** Character offset in the field's expression. */
  readonly at?: number;
  /** For a pressure warning: the scaled or assumed dimensions the position rests on. */
  readonly names?: readonly string[];
}

export interface FeatureThread {
  readonly designation: string;
  readonly series: ThreadSeries;
  readonly majorMm: number;
  readonly pitchMm: number;
  readonly tpi?: number;
  readonly source: string;
}

export interface FeatureTap {
  readonly targetPercent: number;
  /** The drill the % rule gives before rounding to a stock size. */
  readonly theoreticalMm: number;
  /** Nearest stock drill in the part's drill set, and the % thread it really cuts. */
  readonly stock: StockDrill & { readonly percentThread: number };
  /** The series' published chart drill, where one is held. */
  readonly published?: DrillRecommendation & { readonly percentThread: number };
  readonly rule: string;
  readonly source: string;
}

export interface FeatureClearance {
  readonly fit: 'close' | 'free';
  readonly close: DrillRecommendation;
  readonly free: DrillRecommendation;
  /** The smallest stock drill in the part's set at least as large as the chosen fit. */
  readonly stock: StockDrill;
  readonly source: string;
}

/** The drill that makes the hole (tap drill, clearance drill or the named drill). */
export interface FeatureDrill {
  readonly label: string;
  readonly mm: number;
  readonly inch: number;
  /** `tap`, `clearance` or `named` (the drill written on the feature). */
  readonly role: 'tap' | 'clearance' | 'named';
  /** For a tapped hole: the % thread this drill cuts. */
  readonly percentThread?: number;
  /** The written size is not a stock drill of the part's set: the nearest stock one. */
  readonly nearestStock?: StockDrill;
  readonly source: string;
}

/** Spindle speed for the drill: N = 1000·Vc/(π·D), HSS, the low end of the material's range. */
export interface FeatureSpeed {
  readonly rpm: number;
  readonly vcMPerMin: number;
  readonly range: { readonly min: number; readonly max: number };
  readonly material: string;
  readonly formula: string;
  readonly source: string;
}

export interface FeaturePattern {
  readonly type: 'circle' | 'row';
  readonly count: number;
  /** Pitch circle diameter (circle) or pitch (row). */
  readonly size: FeatureLength;
  /** Start angle (circle) or direction (row), degrees counter-clockwise from +X. */
  readonly angleDeg: number;
}

export interface FeatureResult {
  readonly id: string;
  readonly part: string;
  readonly kind: ModelFeature['kind'];
  readonly label: string;
  /** The written position: the hole, a pattern's centre (circle) or first hole (row). */
  readonly x: FeatureLength;
  readonly y: FeatureLength;
  readonly pattern?: FeaturePattern;
  readonly thread?: FeatureThread;
  readonly tap?: FeatureTap;
  readonly clearance?: FeatureClearance;
  readonly drill?: FeatureDrill;
  readonly speed?: FeatureSpeed;
  readonly depth: 'through' | FeatureLength;
  readonly width?: FeatureLength;
  readonly length?: FeatureLength;
  readonly note?: string;
  /** One per hole (a single feature has one). */
  readonly rows: readonly FeatureRow[];
  readonly errors: readonly FeatureIssue[];
  readonly warnings: readonly FeatureIssue[];
}

export interface PartResult {
  readonly id: string;
  readonly name: string;
  readonly material: string;
  /** The material's name in the speeds table (undefined when the material is not held). */
  readonly materialName?: string;
  readonly quantity: number;
  readonly stack: string | null;
  readonly pressure: boolean;
  readonly drillSet: ModelPart['drillSet'];
  readonly width?: FeatureLength;
  readonly height?: FeatureLength;
  readonly notes?: string;
  readonly features: readonly string[];
  readonly errors: readonly FeatureIssue[];
}

/** What the shop machines in one set-up: a stack of parts drilled together, or one part. */
export interface SheetGroup {
  /** The stack id, or the part id for a part on its own. */
  readonly id: string;
  readonly stack: string | null;
  readonly parts: readonly string[];
  readonly pressure: boolean;
  /** Every hole of the group's features, in readout order (see `READOUT_ORDER`). */
  readonly rows: readonly FeatureRow[];
  readonly features: readonly string[];
  /** Features of pressure-bearing parts resting on scaled or assumed values: for the inspector. */
  readonly pressureFeatures: readonly string[];
}

export interface FeaturesResult {
  readonly units: ModelUnit | null;
  /** The status of the model's own solve (contradictions or gaps elsewhere still show). */
  readonly status: SolveStatus;
  readonly parts: readonly PartResult[];
  readonly features: readonly FeatureResult[];
  readonly groups: readonly SheetGroup[];
  /** Every error and warning of every part and feature, in model order. */
  readonly issues: readonly FeatureIssue[];
  /** How rows are ordered, in words for the shop sheet. */
  readonly order: string;
}
