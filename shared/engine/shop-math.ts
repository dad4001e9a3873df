/**
 * Workshop arithmetic for the shop sheet: hole positions on a pitch circle or in a row, and
 * spindle speeds from surface speeds for high-speed-steel (HSS) tools.
 *
 * Positions are in the part's datum frame: x right, y up, angles counter-clockwise from +X in
 * degrees, as a drawing and a DRO's bolt-circle function use them.
 */
import { EngineError } from './errors';

export type ShopMathErrorCode = 'invalid-input' | 'unknown-material';

/** A shop calculation that cannot be answered; `details.input` names the bad argument. */
export class ShopMathError extends EngineError<ShopMathErrorCode> {
  override readonly name = 'ShopMathError';
  constructor(
    code: ShopMathErrorCode,
    message: string,
    readonly details: { readonly input: string } = { input: '' },
  ) {
    super(code, message, details.input ? { input: details.input } : {});
  }
}

export interface HolePosition {
  readonly index: number;
  readonly x: number;
  readonly y: number;
  /** Direction of the hole from the centre (bolt circle) or along the row, degrees CCW from +X. */
  readonly angleDeg: number;
}

function requirePositive(value: number, name: string): number {
  if (!Number.isFinite(value) || value <= 0) {
    throw new ShopMathError('invalid-input', `${name} must be a positive number, not ${value}`, {
      input: name,
    });
  }
  return value;
}

function requireCount(count: number, name = 'count'): number {
  if (!Number.isInteger(count) || count < 1) {
    throw new ShopMathError('invalid-input', `${name} must be a whole number of holes, 1 or more`, {
      input: name,
    });
  }
  return count;
}

function requireFinite(value: number, name: string): number {
  if (!Number.isFinite(value)) {
    throw new ShopMathError('invalid-input', `${name} must be a finite number`, { input: name });
  }
  return value;
}

/**
 * cos and sin of a whole-degree-friendly angle. Quarter turns are exact, so a hole at 90° has
 * x = 0, not 6e-17, and prints as 0.000 without a minus sign.
 */
function cosSinDeg(deg: number): [number, number] {
  const d = ((deg % 360) + 360) % 360;
  if (d === 0) return [1, 0];
  if (d === 90) return [0, 1];
  if (d === 180) return [-1, 0];
  if (d === 270) return [0, -1];
  const r = (d * Math.PI) / 180;
  return [Math.cos(r), Math.sin(r)];
}

/**
 * Hole centres on a pitch circle: xᵢ = cx + (PCD/2)·cos(θ₀ + i·360°/N), yᵢ likewise with sin
 * (check-values §10, [published] jonilsson.github.io bolt_circles).
 *
 * @example boltCircle({ pcd: 100, count: 6 })[1] // { index: 1, x: 25, y: 43.30127…, angleDeg: 60 }
 */
export function boltCircle(params: {
  readonly pcd: number;
  readonly count: number;
  readonly startAngleDeg?: number;
  readonly centre?: { readonly x: number; readonly y: number };
}): readonly HolePosition[] {
  const pcd = requirePositive(params.pcd, 'pcd');
  const count = requireCount(params.count);
  const start = requireFinite(params.startAngleDeg ?? 0, 'startAngleDeg');
  const cx = requireFinite(params.centre?.x ?? 0, 'centre.x');
  const cy = requireFinite(params.centre?.y ?? 0, 'centre.y');
  const r = pcd / 2;
  return Array.from({ length: count }, (_, index) => {
    const angleDeg = start + (index * 360) / count;
    const [c, s] = cosSinDeg(angleDeg);
    return { index, x: cx + r * c, y: cy + r * s, angleDeg };
  });
}

/**
 * Straight-line distance between adjacent holes on a pitch circle: PCD·sin(180°/N)
 * (check-values §10). Dividers set to this step the holes off round the circle.
 *
 * @example boltCircleChord(100, 6) // 50
 */
export function boltCircleChord(pcd: number, count: number): number {
  requirePositive(pcd, 'pcd');
  if (requireCount(count) < 2) {
    throw new ShopMathError('invalid-input', 'A chord needs at least 2 holes', { input: 'count' });
  }
  return pcd * cosSinDeg(180 / count)[1];
}

/**
 * Holes in a straight row: the first at `start`, then every `pitch` along `directionDeg`
 * (CCW from +X).
 *
 * @example holeRow({ start: { x: 10, y: 5 }, pitch: 12.7, count: 3 }).map((h) => h.x) // [10, 22.7, 35.4]
 */
export function holeRow(params: {
  readonly start: { readonly x: number; readonly y: number };
  readonly pitch: number;
  readonly count: number;
  readonly directionDeg?: number;
}): readonly HolePosition[] {
  const x0 = requireFinite(params.start.x, 'start.x');
  const y0 = requireFinite(params.start.y, 'start.y');
  const pitch = requirePositive(params.pitch, 'pitch');
  const count = requireCount(params.count);
  const angleDeg = requireFinite(params.directionDeg ?? 0, 'directionDeg');
  const [c, s] = cosSinDeg(angleDeg);
  return Array.from({ length: count }, (_, index) => ({
    index,
    x: x0 + index * pitch * c,
    y: y0 + index * pitch * s,
    angleDeg,
  }));
}

// ---------------------------------------------------------------------------------------------
// Speeds

/**
 * Spindle speed from surface speed, metric: N = 1000·Vc/(π·D), Vc in m/min, D in mm
 * (check-values §9, [published] incoherency.co.uk lathe-speeds).
 *
 * @example spindleSpeedRpm(30, 20) // 477.46
 */
export function spindleSpeedRpm(vcMPerMin: number, diameterMm: number): number {
  return (1000 * requirePositive(vcMPerMin, 'Vc')) / (Math.PI * requirePositive(diameterMm, 'D'));
}

/**
 * Surface speed from spindle speed, metric: Vc = π·D·N/1000 m/min.
 *
 * @example surfaceSpeedMPerMin(75, 425) // 100.14
 */
export function surfaceSpeedMPerMin(diameterMm: number, rpm: number): number {
  return (Math.PI * requirePositive(diameterMm, 'D') * requirePositive(rpm, 'rpm')) / 1000;
}

/**
 * Spindle speed from surface speed, inch: N = 12·SFM/(π·D), D in inches; 12/π ≈ 3.82, the
 * shop's "4 × SFM / D" (check-values §9, [published] protocutter.com).
 *
 * @example spindleSpeedRpmInch(100, 1) // 381.97
 */
export function spindleSpeedRpmInch(sfm: number, diameterIn: number): number {
  return (12 * requirePositive(sfm, 'SFM')) / (Math.PI * requirePositive(diameterIn, 'D'));
}

/**
 * Surface speed in feet per minute from spindle speed, inch: SFM = π·D·N/12.
 *
 * @example surfaceSpeedSfm(1, 387) // 101.3
 */
export function surfaceSpeedSfm(diameterIn: number, rpm: number): number {
  return (Math.PI * requirePositive(diameterIn, 'D') * requirePositive(rpm, 'rpm')) / 12;
}

export type MaterialId =
  | 'mild-steel'
  | 'free-cutting-steel'
  | 'cast-iron'
  | 'brass'
  | 'bronze'
  | 'aluminium'
  | 'copper'
  | 'stainless-steel'
  | 'tool-steel';

export interface SpeedRange {
  readonly min: number;
  readonly max: number;
}

/** HSS surface speeds for one material, m/min, with where the figures come from. */
export interface MaterialSpeeds {
  readonly id: MaterialId;
  readonly name: string;
  readonly turning: SpeedRange;
  /** Where a source gives drilling separately; otherwise drilling uses the turning range. */
  readonly drilling?: SpeedRange;
  readonly source: string;
}

/**
 * HSS surface speeds (check-values §9; ranges, confidence M). Sources differ by a factor of
 * two; the ranges keep the low ends that small, less rigid model-engineering lathes need.
 */
export const HSS_SURFACE_SPEEDS: readonly MaterialSpeeds[] = Object.freeze([
  {
    id: 'mild-steel',
    name: 'Mild steel (low carbon, 1018–1020 / EN3)',
    turning: { min: 20, max: 35 },
    drilling: { min: 20, max: 30 },
    // turning 20–35, drilling 20–30 m/min [published] incoherency.co.uk/jesref/lathe-speeds.html;
    // MH 1018 HSS turning 120 fpm [published] vm68.com/stuff/sfpm.html (check-values §9).
    source: 'workshop practice',
  },
  {
    id: 'free-cutting-steel',
    name: 'Free-cutting steel (leaded / resulphurised, 12L14 / EN1A)',
    // The 30–45 / 25–35 m/min once held here were [from memory]. The published tables group
    // free-cutting with non-alloy steel (ISCAR groove-turn guide, material group 1), so it
    // takes the mild-steel figures [published] incoherency.co.uk (check-values §9).
    turning: { min: 20, max: 35 },
    drilling: { min: 20, max: 30 },
    source: 'as mild steel (workshop practice)',
  },
  {
    id: 'cast-iron',
    name: 'Grey cast iron',
    turning: { min: 15, max: 35 },
    drilling: { min: 15, max: 30 },
    // class 20 cast iron 35 turning, 30 drilling m/min [published] incoherency.co.uk; low end
    // 15 m/min [common practice, no source] (check-values §9).
    source: 'workshop practice',
  },
  {
    id: 'brass',
    name: 'Brass (free-machining to other brasses)',
    turning: { min: 60, max: 105 },
    // other brass & bronze 60–75, free-machining brass 90–105 m/min [published]
    // incoherency.co.uk (check-values §9).
    source: 'workshop practice',
  },
  {
    id: 'bronze',
    name: 'Bronze and gunmetal (phosphor bronze slowest)',
    // Up to 60–75 m/min [published] incoherency.co.uk (check-values §9). The low end was 30
    // m/min [from memory]; Machinery's Handbook as quoted in Jones, "Turning and Boring"
    // (bitlit.ru copy), gives hard bronze 35–80 ft/min, so the low end is 35 ft/min ≈ 11 m/min.
    turning: { min: 11, max: 75 },
    source: 'workshop practice',
  },
  {
    id: 'aluminium',
    name: 'Aluminium alloys',
    turning: { min: 75, max: 180 },
    drilling: { min: 30, max: 120 },
    // turning 150–180, drilling 30–120 m/min [published] incoherency.co.uk; 250 SFM ≈ 75 m/min
    // [published] hobby-machinist.com (check-values §9).
    source: 'workshop practice',
  },
  {
    id: 'copper',
    name: 'Copper',
    // 30–60 m/min was [from memory]. Published: copper 100 ft/min ≈ 30 m/min, HSS (Grizzly
    // G0619 manual, "Cutting Speeds for High Speed Steel", manualshive.com copy). One figure,
    // so the range is that figure.
    turning: { min: 30, max: 30 },
    source: 'workshop practice',
  },
  {
    id: 'stainless-steel',
    name: 'Stainless steel (austenitic, 303/304/316)',
    // 10–20 m/min was [from memory]. Published: stainless 60 ft/min ≈ 18 m/min, HSS (Grizzly
    // G0619 manual, manualshive.com copy); the low end stays at the tool-steel 10 m/min of
    // check-values §9 [published] protocutter.com, since stainless work-hardens if the tool rubs.
    turning: { min: 10, max: 18 },
    source: 'workshop practice',
  },
  {
    id: 'tool-steel',
    name: 'Silver steel and tool steel (annealed, O1/A2/W1)',
    turning: { min: 10, max: 20 },
    // MH HSS drilling O1 45, A2 50, W1 85 fpm [published] protocutter.com; 10–20 m/min
    // (check-values §9); ME lore 10–15 m/min [common practice, no source].
    source: 'workshop practice',
  },
]);

/**
 * The HSS speeds held for a material.
 *
 * @example materialSpeeds('brass').turning // { min: 60, max: 105 }
 */
export function materialSpeeds(id: MaterialId | string): MaterialSpeeds {
  const m = HSS_SURFACE_SPEEDS.find((x) => x.id === id);
  if (!m) {
    throw new ShopMathError(
      'unknown-material',
      `No speeds held for "${id}"; known: ${HSS_SURFACE_SPEEDS.map((x) => x.id).join(', ')}`,
      { input: String(id) },
    );
  }
  return m;
}

/**
 * A conservative HSS surface speed: the low end of the material's range for the operation
 * (drilling uses the turning range where no drilling figure is held). A light lathe, an
 * interrupted cut or a long drill wants the low end; the range is there to go faster.
 *
 * @example conservativeSurfaceSpeed('mild-steel') // { vcMPerMin: 20, range: { min: 20, max: 35 }, … }
 */
export function conservativeSurfaceSpeed(
  id: MaterialId | string,
  operation: 'turning' | 'drilling' = 'turning',
): { readonly vcMPerMin: number; readonly range: SpeedRange; readonly source: string } {
  const m = materialSpeeds(id);
  const range = operation === 'drilling' ? (m.drilling ?? m.turning) : m.turning;
  return { vcMPerMin: range.min, range, source: m.source };
}

/**
 * Spindle speed for HSS in a material at a diameter (work diameter turning, drill diameter
 * drilling), from the conservative surface speed.
 *
 * @example spindleSpeedFor('mild-steel', 20).rpm // 318.3 (20 m/min at 20 mm)
 */
export function spindleSpeedFor(
  id: MaterialId | string,
  diameterMm: number,
  operation: 'turning' | 'drilling' = 'turning',
): { readonly rpm: number; readonly vcMPerMin: number; readonly source: string } {
  const { vcMPerMin, source } = conservativeSurfaceSpeed(id, operation);
  return { rpm: spindleSpeedRpm(vcMPerMin, diameterMm), vcMPerMin, source };
}
