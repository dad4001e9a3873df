// The Kestrel design (invented; every name and figure in it is ours): the frame plate, the
// hornblock and the horn stay in model inches, where each sheet of the drawing puts them, and the
// full-size engine in prototype millimetres. The drawing, the photo and the demo figures all
// read these numbers, so the pins land on what is drawn.
import { MM_PER_IN } from '@shared/engine';

export const PX_PER_PT = 150 / 72;
/** The prototype is 11.3 times the model (5 in gauge for standard gauge). */
export const demoModelScale = '1:11.3';
const SCALE = 11.3;

export const round = (v: number, digits = 3) => Number(v.toFixed(digits));

// ---------------------------------------------------------------------------------------------
// The design, in model inches. Frame plate: u along from the front end, v down from the top edge.
// Lists are fixed (`as const`): the drawing and the pins read their entries by position.

export const kestrelFrame = {
  lengthIn: 30.25,
  depthIn: 4.5,
  /** Axle centres from the front end; the wheelbase is 8 1/2. */
  axlesIn: [8.75, 17.25] as const,
  cutoutWidthIn: 2.25,
  cutoutDepthIn: 2.125,
  /** Hornblock bolt holes: columns either side of the axle centre line, rows down from the top. */
  hornHoleOffsetIn: 1.4375,
  hornHoleRowsIn: [2.75, 3.375, 4.0] as const,
  hornTopHoles: { offsetIn: 0.5, vIn: 2.0625 },
  bufferAngle: { widthIn: 0.75, holeU: 0.375, holeV: [1, 2.25, 3.5] as const },
  dragAngle: { fromIn: 29.5, holeU: 29.875, holeV: [1, 2.25, 3.5] as const },
  /** Stretcher holes; the one at 22 1/2 is drawn but its position along is not dimensioned. */
  stretchers: [
    { u: 4.125, v: [1.5, 3.0], name: 'front stretcher' },
    { u: 13, v: [1.25, 2.0], name: 'motion stretcher' },
    { u: 22.5, v: [1.75, 2.75], name: 'rear stretcher' },
  ] as const,
  /** The chain along the bottom as printed; the last figure should read 13. */
  printedChain: ['8 3/4', '8 1/2', '12 1/2'] as const,
  holeDiaIn: 0.13,
};

// Sheet 1 is drawn at 4 in = 1 ft (1:3): one model inch is 24 pt on the page, 50 px at 150 dpi.
export const S1 = { x0: 120, y0: 300, ptPerIn: 24 };
export const s1pt = (u: number, v: number) => ({
  x: S1.x0 + S1.ptPerIn * u,
  y: S1.y0 + S1.ptPerIn * v,
});
export const s1px = (u: number, v: number) => {
  const p = s1pt(u, v);
  return { x: round(p.x * PX_PER_PT), y: round(p.y * PX_PER_PT) };
};

// Sheet 2 is full size: one inch is 72 pt, 150 px.
export const kestrelHornblock = {
  widthIn: 3.25,
  heightIn: 2.75,
  slotWidthIn: 1.5,
  slotTopIn: 0.75,
  spigotWidthIn: 2.25,
  holeOffsetIn: 1.4375,
  holeRowsIn: [0.875, 1.5, 2.125] as const,
  topHoles: { offsetIn: 0.5, vIn: 0.1875 },
  flangeIn: 0.1875,
  webDepthIn: 0.8125,
};
export const kestrelHornStay = {
  lengthIn: 3.25,
  depthIn: 0.375,
  holeCentresIn: 2.25,
  holeVIn: 0.1875,
};
export const S2 = { hbX: 144, hbY: 216, stayX: 144, stayY: 600, sideX: 560, ptPerIn: 72 };
export const s2px = (xPt: number, yPt: number) => ({
  x: round(xPt * PX_PER_PT),
  y: round(yPt * PX_PER_PT),
});

// ---------------------------------------------------------------------------------------------
// The full-size engine. Its side is a plane, drawn flat in prototype millimetres (x along from
// the frame's front end, y down from a line above the chimney, the rail top at y = 3900).

export const proto = (modelIn: number) => modelIn * MM_PER_IN * SCALE;
export const RAIL_Y = 3900;
export const WHEEL_R = (42 * MM_PER_IN) / 2; // 3 ft 6 in over the tyres
export const AXLE_Y = RAIL_Y - WHEEL_R;
/** Frame top: the axle centre sits 3 1/4 in (model) below it. */
export const FRAME_TOP = AXLE_Y - proto(3.25);

export const kestrelPrototype = {
  wheelDiameterMm: 2 * WHEEL_R,
  wheelDiameterText: `3' 6"`,
  axlesMm: kestrelFrame.axlesIn.map(proto) as [number, number],
  axleYMm: AXLE_Y,
  frameLengthMm: proto(kestrelFrame.lengthIn),
  /** The lined panel on the side tank (its lining's outer edge): the four-point rectangle. */
  tankPanel: { x: 1560, y: 1290, widthMm: 4064, heightMm: 990.6 },
  tankPanelText: { width: `13' 4"`, height: `3' 3"` },
  /** The cab side sheet, also lined: a second rectangle of known size. */
  cabPanel: { x: 5800, y: FRAME_TOP - 53.8 - 1676.4, widthMm: 1524, heightMm: 1676.4 },
  cabPanelText: { width: `5' 0"`, height: `5' 6"` },
};
