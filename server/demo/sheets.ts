// The demo sheets (invented; every name and figure in them is ours): a two-page drawing of the
// Kestrel frames made with pdfkit, and a stand-in photograph of the full-size engine made by
// a small rasteriser and a homography. Both go through the sheet service like any upload.
import { createRequire } from 'node:module';
import jpeg from 'jpeg-js';
import PDFDocument from 'pdfkit';
import type { Measurement, Pin, Sheet, SheetCalibrationDto, SheetPointDto } from '@shared/api';
import {
  applyHomography,
  fitHomography,
  measureBetweenPins,
  parseModelScale,
  planeToSheet,
  prototypeToModel,
  type HomographyCalibration,
} from '@shared/engine';
import type { Db } from '../db/client';
import { createSheetService, engineCalibration } from '../services/sheets';
import type { BlobStorage } from '../storage/storage';

const MM_PER_IN = 25.4;
const PX_PER_PT = 150 / 72;
/** The prototype is 11.3 times the model (5 in gauge for standard gauge). */
export const demoModelScale = '1:11.3';
const SCALE = 11.3;

const round = (v: number, digits = 3) => Number(v.toFixed(digits));

// ---------------------------------------------------------------------------------------------
// The design, in model inches. Frame plate: u along from the front end, v down from the top edge.

export const kestrelFrame = {
  lengthIn: 30.25,
  depthIn: 4.5,
  /** Axle centres from the front end; the wheelbase is 8 1/2. */
  axlesIn: [8.75, 17.25] as const,
  cutoutWidthIn: 2.25,
  cutoutDepthIn: 2.125,
  /** Hornblock bolt holes: columns either side of the axle centre line, rows down from the top. */
  hornHoleOffsetIn: 1.4375,
  hornHoleRowsIn: [2.75, 3.375, 4.0],
  hornTopHoles: { offsetIn: 0.5, vIn: 2.0625 },
  bufferAngle: { widthIn: 0.75, holeU: 0.375, holeV: [1, 2.25, 3.5] },
  dragAngle: { fromIn: 29.5, holeU: 29.875, holeV: [1, 2.25, 3.5] },
  /** Stretcher holes; the one at 22 1/2 is drawn but its position along is not dimensioned. */
  stretchers: [
    { u: 4.125, v: [1.5, 3.0], name: 'front stretcher' },
    { u: 13, v: [1.25, 2.0], name: 'motion stretcher' },
    { u: 22.5, v: [1.75, 2.75], name: 'rear stretcher' },
  ],
  /** The chain along the bottom as printed; the last figure should read 13. */
  printedChain: ['8 3/4', '8 1/2', '12 1/2'],
  holeDiaIn: 0.13,
};

// Sheet 1 is drawn at 4 in = 1 ft (1:3): one model inch is 24 pt on the page, 50 px at 150 dpi.
const S1 = { x0: 120, y0: 300, ptPerIn: 24 };
const s1pt = (u: number, v: number) => ({ x: S1.x0 + S1.ptPerIn * u, y: S1.y0 + S1.ptPerIn * v });
const s1px = (u: number, v: number) => {
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
  holeRowsIn: [0.875, 1.5, 2.125],
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
const S2 = { hbX: 144, hbY: 216, stayX: 144, stayY: 600, sideX: 560, ptPerIn: 72 };
const s2px = (xPt: number, yPt: number) => ({
  x: round(xPt * PX_PER_PT),
  y: round(yPt * PX_PER_PT),
});

// ---------------------------------------------------------------------------------------------
// The drawing (pdfkit)

type Doc = InstanceType<typeof PDFDocument>;
const require = createRequire(import.meta.url);
const font = (weight: 400 | 600) =>
  require.resolve(`@fontsource/ibm-plex-sans/files/ibm-plex-sans-latin-${weight}-normal.woff`);

const INK = '#1d2430';

function arrow(doc: Doc, x: number, y: number, dx: number, dy: number) {
  const len = Math.hypot(dx, dy);
  const [ux, uy] = [dx / len, dy / len];
  const [s, w] = [6, 1.8];
  doc
    .moveTo(x, y)
    .lineTo(x - ux * s - uy * w, y - uy * s + ux * w)
    .lineTo(x - ux * s + uy * w, y - uy * s - ux * w)
    .closePath()
    .fill(INK);
}

function label(
  doc: Doc,
  text: string,
  x: number,
  y: number,
  size = 9,
  align: 'centre' | 'left' = 'centre',
) {
  doc.fontSize(size).fillColor(INK);
  const w = doc.widthOfString(text);
  doc.text(text, align === 'centre' ? x - w / 2 : x, y - size * 1.15, { lineBreak: false });
}

/** A horizontal dimension between x1 and x2 (pt) on the line at y, with extension lines from fromY. */
function dimH(doc: Doc, x1: number, x2: number, y: number, text: string, fromY?: number) {
  doc.lineWidth(0.4).strokeColor(INK);
  if (fromY !== undefined) {
    const dir = Math.sign(y - fromY);
    for (const x of [x1, x2])
      doc
        .moveTo(x, fromY + dir * 2)
        .lineTo(x, y + dir * 3)
        .stroke();
  }
  doc.moveTo(x1, y).lineTo(x2, y).stroke();
  arrow(doc, x1, y, x1 - x2, 0);
  arrow(doc, x2, y, x2 - x1, 0);
  label(doc, text, (x1 + x2) / 2, y - 1.5);
}

/** A vertical dimension between y1 and y2 (pt) on the line at x, with extension lines from fromX. */
function dimV(doc: Doc, y1: number, y2: number, x: number, text: string, fromX?: number) {
  doc.lineWidth(0.4).strokeColor(INK);
  if (fromX !== undefined) {
    const dir = Math.sign(x - fromX);
    for (const y of [y1, y2])
      doc
        .moveTo(fromX + dir * 2, y)
        .lineTo(x + dir * 3, y)
        .stroke();
  }
  doc.moveTo(x, y1).lineTo(x, y2).stroke();
  arrow(doc, x, y1, 0, y1 - y2);
  arrow(doc, x, y2, 0, y2 - y1);
  doc.save().rotate(-90, { origin: [x, (y1 + y2) / 2] });
  label(doc, text, x, (y1 + y2) / 2 - 1.5);
  doc.restore();
}

function hole(doc: Doc, x: number, y: number, r: number) {
  doc.lineWidth(0.6).strokeColor(INK).circle(x, y, r).stroke();
  doc.lineWidth(0.25);
  doc
    .moveTo(x - r - 3, y)
    .lineTo(x + r + 3, y)
    .stroke();
  doc
    .moveTo(x, y - r - 3)
    .lineTo(x, y + r + 3)
    .stroke();
}

function centreLine(doc: Doc, x1: number, y1: number, x2: number, y2: number) {
  doc.save().lineWidth(0.3).strokeColor(INK).dash(9, { space: 2.5 });
  doc.moveTo(x1, y1).lineTo(x2, y2).stroke();
  doc.restore();
}

function hidden(doc: Doc, draw: () => void) {
  doc.save().lineWidth(0.6).strokeColor(INK).dash(3, { space: 2 });
  draw();
  doc.restore();
}

function border(doc: Doc) {
  const { width, height } = doc.page;
  doc
    .lineWidth(1.2)
    .strokeColor(INK)
    .rect(28, 28, width - 56, height - 56)
    .stroke();
}

function titleBlock(doc: Doc, lines: { title: string; scale: string; sheet: string }) {
  const { width, height } = doc.page;
  const [w, h] = [360, 120];
  const [x, y] = [width - 28 - w, height - 28 - h];
  doc.lineWidth(1).strokeColor(INK).rect(x, y, w, h).stroke();
  doc.lineWidth(0.5);
  for (const dy of [44, 72, 96])
    doc
      .moveTo(x, y + dy)
      .lineTo(x + w, y + dy)
      .stroke();
  doc
    .moveTo(x + 180, y + 72)
    .lineTo(x + 180, y + h)
    .stroke();
  doc.font('plex-600');
  label(doc, 'KESTREL', x + 12, y + 24, 16, 'left');
  doc.font('plex');
  label(doc, '5 in gauge 0-4-0 tank engine — frames and hornblocks', x + 12, y + 38, 8.5, 'left');
  label(doc, lines.title, x + 12, y + 63, 11, 'left');
  label(doc, lines.scale, x + 12, y + 89, 9, 'left');
  label(doc, 'Dimensions in inches', x + 192, y + 89, 9, 'left');
  label(doc, lines.sheet, x + 12, y + 113, 9, 'left');
  label(doc, 'Invented design — Fairsheet demo', x + 192, y + 113, 8, 'left');
}

function drawFramePlate(doc: Doc) {
  const f = kestrelFrame;
  const P = s1pt;
  const K = S1.ptPerIn;
  const r = (f.holeDiaIn / 2) * K;
  const half = f.cutoutWidthIn / 2;
  const cutTop = f.depthIn - f.cutoutDepthIn;

  // Outline, clockwise from the top front corner, with the two open hornblock cut-outs and a
  // 1 in chamfer at the rear bottom corner.
  const outline: [number, number][] = [
    [0, 0],
    [f.lengthIn, 0],
    [f.lengthIn, f.depthIn - 1],
    [f.lengthIn - 1, f.depthIn],
  ];
  for (const a of [...f.axlesIn].reverse()) {
    outline.push(
      [a + half, f.depthIn],
      [a + half, cutTop],
      [a - half, cutTop],
      [a - half, f.depthIn],
    );
  }
  outline.push([0, f.depthIn]);
  doc.lineWidth(1.3).strokeColor(INK);
  outline.forEach(([u, v], i) => {
    const p = P(u, v);
    if (i === 0) doc.moveTo(p.x, p.y);
    else doc.lineTo(p.x, p.y);
  });
  doc.closePath().stroke();

  // Axle centre lines, hornblock holes.
  for (const a of f.axlesIn) {
    centreLine(doc, P(a, -0.4).x, P(a, -0.4).y, P(a, f.depthIn + 0.5).x, P(a, f.depthIn + 0.5).y);
    for (const side of [-1, 1]) {
      for (const v of f.hornHoleRowsIn)
        hole(doc, P(a + side * f.hornHoleOffsetIn, v).x, P(0, v).y, r);
      const t = P(a + side * f.hornTopHoles.offsetIn, f.hornTopHoles.vIn);
      hole(doc, t.x, t.y, r);
    }
  }

  // Buffer-beam angle at the front, drag-beam angle at the rear: behind the plate, so hidden.
  hidden(doc, () => {
    const a = P(0, 0);
    doc.rect(a.x, a.y, f.bufferAngle.widthIn * K, f.depthIn * K).stroke();
    const b = P(f.dragAngle.fromIn, 0);
    doc.rect(b.x, b.y, (f.lengthIn - f.dragAngle.fromIn) * K, (f.depthIn - 1) * K).stroke();
  });
  for (const v of f.bufferAngle.holeV) hole(doc, P(f.bufferAngle.holeU, v).x, P(0, v).y, r);
  for (const v of f.dragAngle.holeV) hole(doc, P(f.dragAngle.holeU, v).x, P(0, v).y, r);
  for (const s of f.stretchers) {
    for (const v of s.v) hole(doc, P(s.u, v).x, P(s.u, v).y, r * 1.25);
  }

  // Dimensions above: stretcher positions and the overall length.
  const top = P(0, 0).y;
  dimH(doc, P(0, 0).x, P(f.stretchers[0].u, 0).x, P(0, -0.7).y, '4 1/8', top);
  dimH(doc, P(0, 0).x, P(f.stretchers[1].u, 0).x, P(0, -1.3).y, '13', top);
  dimH(doc, P(0, 0).x, P(f.lengthIn, 0).x, P(0, -1.9).y, '30 1/4', top);
  // Below: the chain of axle positions, as printed (it adds up to 29 3/4, not 30 1/4).
  const bottom = P(0, f.depthIn).y;
  const chainY = P(0, f.depthIn + 1.5).y;
  const stops = [0, ...f.axlesIn, f.lengthIn];
  stops.slice(1).forEach((u, i) => {
    dimH(doc, P(stops[i], 0).x, P(u, 0).x, chainY, f.printedChain[i], i === 0 ? bottom : undefined);
  });
  doc
    .lineWidth(0.4)
    .moveTo(P(f.lengthIn, 0).x, P(0, f.depthIn - 1).y + 2)
    .lineTo(P(f.lengthIn, 0).x, chainY + 3)
    .stroke();
  // Cut-out width and depth (leading hornblock), hole offset and rows (trailing hornblock).
  const [a1, a2] = f.axlesIn;
  dimH(doc, P(a1 - half, 0).x, P(a1 + half, 0).x, P(0, f.depthIn + 0.6).y, '2 1/4', bottom);
  dimV(doc, P(0, cutTop).y, bottom, P(a1 - half - 1.1, 0).x, '2 1/8', P(a1 - half, 0).x);
  dimH(doc, P(a2, 0).x, P(a2 + f.hornHoleOffsetIn, 0).x, P(0, f.depthIn + 0.6).y, '1 7/16');
  const colX = P(a2 + f.hornHoleOffsetIn, 0).x;
  dimV(doc, P(0, f.hornHoleRowsIn[2]).y, bottom, P(a2 + 2.2, 0).x, '1/2', colX);
  dimV(
    doc,
    P(0, f.hornHoleRowsIn[1]).y,
    P(0, f.hornHoleRowsIn[2]).y,
    P(a2 + 2.9, 0).x,
    '5/8',
    colX,
  );
  // Depth at the rear end; stretcher rows from the top edge.
  dimV(doc, top, bottom, P(f.lengthIn + 1.2, 0).x, '4 1/2', P(f.lengthIn, 0).x);
  const s0 = f.stretchers[0];
  dimV(doc, top, P(0, s0.v[0]).y, P(s0.u - 0.9, 0).x, '1 1/2', P(s0.u, 0).x);
  dimV(doc, P(0, s0.v[0]).y, P(0, s0.v[1]).y, P(s0.u - 0.9, 0).x, '1 1/2', P(s0.u, 0).x);
  const s2 = f.stretchers[2];
  dimV(doc, top, P(0, s2.v[0]).y, P(s2.u + 0.9, 0).x, '1 3/4', P(s2.u, 0).x);
  // Buffer-beam angle holes, from the outside of the front end.
  const bx = P(f.bufferAngle.holeU, 0).x;
  dimV(doc, top, P(0, f.bufferAngle.holeV[0]).y, P(-1.1, 0).x, '1', bx);
  dimV(
    doc,
    P(0, f.bufferAngle.holeV[0]).y,
    P(0, f.bufferAngle.holeV[1]).y,
    P(-1.1, 0).x,
    '1 1/4',
    bx,
  );

  // Leaders and notes.
  doc.font('plex');
  label(doc, 'BUFFER BEAM ANGLE 3/4 x 3/4 x 1/8', P(0, -2.9).x, P(0, -2.9).y + 4, 8, 'left');
  label(doc, 'DRAG BEAM ANGLE', P(f.dragAngle.fromIn - 2, -2.9).x, P(0, -2.9).y + 4, 8, 'left');
  label(doc, 'LEADING AXLE', P(a1, f.depthIn + 2.5).x, P(0, f.depthIn + 2.6).y, 8);
  label(doc, 'TRAILING AXLE', P(a2, f.depthIn + 2.5).x, P(0, f.depthIn + 2.6).y, 8);
  const notes = [
    'FRAME PLATE, 2 OFF: 1/8 in BRIGHT MILD STEEL. CLAMP AS A PAIR AND DRILL THROUGH BOTH.',
    'HORNBLOCK HOLES 6BA CLEAR (No. 33), 8 PER HORNBLOCK; SPOT FROM THE HORNBLOCKS.',
    'STRETCHER AND ANGLE HOLES 4BA CLEAR (No. 26).',
    'HOLES NOT DIMENSIONED ARE TO SUIT THE PARTS THEY CARRY.',
  ];
  notes.forEach((n, i) => label(doc, n, 60, 620 + i * 15, 8.5, 'left'));
  titleBlock(doc, {
    title: 'Frame plate — side view',
    scale: 'Scale 4 in = 1 ft',
    sheet: 'Drawing K-1, sheet 1 of 2',
  });
}

function drawHornblock(doc: Doc) {
  const h = kestrelHornblock;
  const K = S2.ptPerIn;
  const X = (u: number) => S2.hbX + K * (u + h.widthIn / 2); // u from the centre line
  const Y = (v: number) => S2.hbY + K * v;
  const r = (kestrelFrame.holeDiaIn / 2) * K;
  const slot = h.slotWidthIn / 2;

  // Front elevation: flange plate with the axlebox slot open at the bottom.
  doc.lineWidth(1.3).strokeColor(INK);
  doc
    .moveTo(X(-h.widthIn / 2), Y(0))
    .lineTo(X(h.widthIn / 2), Y(0))
    .lineTo(X(h.widthIn / 2), Y(h.heightIn))
    .lineTo(X(slot), Y(h.heightIn))
    .lineTo(X(slot), Y(h.slotTopIn))
    .lineTo(X(-slot), Y(h.slotTopIn))
    .lineTo(X(-slot), Y(h.heightIn))
    .lineTo(X(-h.widthIn / 2), Y(h.heightIn))
    .closePath()
    .stroke();
  hidden(doc, () => {
    for (const s of [-1, 1]) {
      doc
        .moveTo(X((s * h.spigotWidthIn) / 2), Y(0.5))
        .lineTo(X((s * h.spigotWidthIn) / 2), Y(h.heightIn))
        .stroke();
    }
  });
  centreLine(doc, X(0), Y(-0.3), X(0), Y(h.heightIn + 0.4));
  for (const s of [-1, 1]) {
    for (const v of h.holeRowsIn) hole(doc, X(s * h.holeOffsetIn), Y(v), r);
    hole(doc, X(s * h.topHoles.offsetIn), Y(h.topHoles.vIn), r);
  }
  dimH(doc, X(-h.widthIn / 2), X(h.widthIn / 2), Y(-0.9), '3 1/4', Y(0));
  dimH(doc, X(-h.holeOffsetIn), X(h.holeOffsetIn), Y(-0.45), '2 7/8', Y(h.holeRowsIn[0]));
  dimH(doc, X(-slot), X(slot), Y(h.heightIn + 0.5), '1 1/2', Y(h.heightIn));
  dimH(doc, X(-h.topHoles.offsetIn), X(h.topHoles.offsetIn), Y(-0.15), '1', Y(h.topHoles.vIn));
  dimV(doc, Y(0), Y(h.heightIn), X(-h.widthIn / 2 - 0.6), '2 3/4', X(-h.widthIn / 2));
  dimV(doc, Y(0), Y(h.holeRowsIn[0]), X(h.widthIn / 2 + 0.45), '7/8', X(h.holeOffsetIn));
  dimV(
    doc,
    Y(h.holeRowsIn[0]),
    Y(h.holeRowsIn[1]),
    X(h.widthIn / 2 + 0.45),
    '5/8',
    X(h.holeOffsetIn),
  );
  label(
    doc,
    'HORNBLOCK, 4 OFF — GUNMETAL CASTING, MACHINE ALL OVER',
    X(-h.widthIn / 2),
    Y(h.heightIn + 1.25),
    9,
    'left',
  );

  // Side view: flange and web.
  const SX = (u: number) => S2.sideX + K * u;
  doc.lineWidth(1.3).strokeColor(INK);
  doc
    .moveTo(SX(0), Y(0))
    .lineTo(SX(h.flangeIn), Y(0))
    .lineTo(SX(h.flangeIn), Y(0.5))
    .lineTo(SX(h.webDepthIn), Y(0.5))
    .lineTo(SX(h.webDepthIn), Y(h.heightIn))
    .lineTo(SX(0), Y(h.heightIn))
    .closePath()
    .stroke();
  dimH(doc, SX(0), SX(h.webDepthIn), Y(h.heightIn + 0.5), '13/16', Y(h.heightIn));
  dimH(doc, SX(0), SX(h.flangeIn), Y(-0.45), '3/16', Y(0));
  label(doc, 'SIDE VIEW', SX(0), Y(h.heightIn + 1.25), 9, 'left');

  // Horn stay.
  const st = kestrelHornStay;
  const HX = (u: number) => S2.stayX + K * u;
  const HY = (v: number) => S2.stayY + K * v;
  doc
    .lineWidth(1.3)
    .rect(HX(0), HY(0), st.lengthIn * K, st.depthIn * K)
    .stroke();
  const mid = st.lengthIn / 2;
  for (const s of [-1, 1])
    hole(doc, HX(mid + (s * st.holeCentresIn) / 2), HY(st.holeVIn), r * 1.25);
  centreLine(doc, HX(mid), HY(-0.3), HX(mid), HY(st.depthIn + 0.3));
  dimH(doc, HX(0), HX(st.lengthIn), HY(st.depthIn + 0.55), '3 1/4', HY(st.depthIn));
  dimH(
    doc,
    HX(mid - st.holeCentresIn / 2),
    HX(mid + st.holeCentresIn / 2),
    HY(-0.4),
    '2 1/4',
    HY(st.holeVIn),
  );
  dimV(doc, HY(0), HY(st.depthIn), HX(st.lengthIn + 0.45), '3/8', HX(st.lengthIn));
  label(
    doc,
    'HORN STAY, 2 OFF — 3/8 x 1/8 STEEL BAR, HOLES 4BA CLEAR',
    HX(0),
    HY(st.depthIn + 1.2),
    9,
    'left',
  );

  titleBlock(doc, {
    title: 'Hornblock and horn stay — details',
    scale: 'Scale full size',
    sheet: 'Drawing K-1, sheet 2 of 2',
  });
}

/** The two-page Kestrel drawing, A3 landscape: frame plate, then hornblock and horn stay. */
export async function buildDemoDrawingPdf(): Promise<Buffer> {
  const doc = new PDFDocument({
    size: 'A3',
    layout: 'landscape',
    margin: 0,
    info: {
      Title: 'Kestrel frames and hornblocks (Fairsheet demo)',
      Author: 'Fairsheet demo',
      // A fixed date makes the file the same bytes on every seed, so it is stored once.
      CreationDate: new Date(Date.UTC(2026, 0, 1)),
    },
  });
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<void>((resolve) => doc.on('end', () => resolve()));
  doc.registerFont('plex', font(400));
  doc.registerFont('plex-600', font(600));
  doc.font('plex');
  border(doc);
  drawFramePlate(doc);
  doc.addPage({ size: 'A3', layout: 'landscape', margin: 0 });
  doc.font('plex');
  border(doc);
  drawHornblock(doc);
  doc.end();
  await done;
  return Buffer.concat(chunks);
}

// ---------------------------------------------------------------------------------------------
// The photograph of the full-size engine. The side of the engine is a plane, drawn flat in
// prototype millimetres (x along from the frame's front end, y down from a line above the
// chimney, the rail top at y = 3900), then seen in perspective through a homography.

const proto = (modelIn: number) => modelIn * MM_PER_IN * SCALE;
const RAIL_Y = 3900;
const WHEEL_R = (42 * MM_PER_IN) / 2; // 3 ft 6 in over the tyres
const AXLE_Y = RAIL_Y - WHEEL_R;
/** Frame top: the axle centre sits 3 1/4 in (model) below it. */
const FRAME_TOP = AXLE_Y - proto(3.25);

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

export const demoPhotoSize = { width: 1600, height: 1000 };

/** Where the engine's extreme corners land in the photo: the front is nearer the camera. */
const PHOTO_ANCHORS = [
  { mm: { x: -600, y: 500 }, px: { x: 110, y: 150 } },
  { mm: { x: 8900, y: 500 }, px: { x: 1500, y: 280 } },
  { mm: { x: 8900, y: RAIL_Y }, px: { x: 1490, y: 800 } },
  { mm: { x: -600, y: RAIL_Y }, px: { x: 100, y: 900 } },
];

/** Photo px → plane mm, as a calibration of the photo would find it; its inverse draws the photo. */
function photoMapping(): HomographyCalibration {
  return fitHomography(
    PHOTO_ANCHORS.map((a) => ({ px: a.px, mm: a.mm })),
    { pickErrorPx: 0 },
  );
}

type Rgb = [number, number, number];

class FlatRaster {
  readonly data: Uint8ClampedArray;
  constructor(
    readonly x0: number,
    readonly y0: number,
    readonly mmPerPx: number,
    readonly width: number,
    readonly height: number,
  ) {
    this.data = new Uint8ClampedArray(width * height * 3);
  }

  private span(a: number, b: number, origin: number, n: number): [number, number] {
    return [
      Math.max(0, Math.floor((a - origin) / this.mmPerPx)),
      Math.min(n - 1, Math.ceil((b - origin) / this.mmPerPx)),
    ];
  }

  /** Paints every pixel whose centre (in mm) passes `inside`, within a box in mm. */
  paint(
    box: [number, number, number, number],
    colour: Rgb,
    inside: (x: number, y: number) => boolean,
  ) {
    const [i0, i1] = this.span(box[0], box[2], this.x0, this.width);
    const [j0, j1] = this.span(box[1], box[3], this.y0, this.height);
    for (let j = j0; j <= j1; j++) {
      const y = this.y0 + (j + 0.5) * this.mmPerPx;
      for (let i = i0; i <= i1; i++) {
        const x = this.x0 + (i + 0.5) * this.mmPerPx;
        if (!inside(x, y)) continue;
        const k = 3 * (j * this.width + i);
        this.data[k] = colour[0];
        this.data[k + 1] = colour[1];
        this.data[k + 2] = colour[2];
      }
    }
  }

  rect(x1: number, y1: number, x2: number, y2: number, colour: Rgb) {
    this.paint([x1, y1, x2, y2], colour, (x, y) => x >= x1 && x < x2 && y >= y1 && y < y2);
  }

  /** A rectangle's border, `w` mm wide, inside its edges. */
  frame(x1: number, y1: number, x2: number, y2: number, w: number, colour: Rgb) {
    this.rect(x1, y1, x2, y1 + w, colour);
    this.rect(x1, y2 - w, x2, y2, colour);
    this.rect(x1, y1, x1 + w, y2, colour);
    this.rect(x2 - w, y1, x2, y2, colour);
  }

  disc(cx: number, cy: number, r: number, colour: Rgb, inner = 0) {
    this.paint([cx - r, cy - r, cx + r, cy + r], colour, (x, y) => {
      const d = Math.hypot(x - cx, y - cy);
      return d <= r && d >= inner;
    });
  }

  line(x1: number, y1: number, x2: number, y2: number, w: number, colour: Rgb) {
    const [dx, dy] = [x2 - x1, y2 - y1];
    const len2 = dx * dx + dy * dy;
    const box: [number, number, number, number] = [
      Math.min(x1, x2) - w,
      Math.min(y1, y2) - w,
      Math.max(x1, x2) + w,
      Math.max(y1, y2) + w,
    ];
    this.paint(box, colour, (x, y) => {
      const t = Math.max(0, Math.min(1, ((x - x1) * dx + (y - y1) * dy) / len2));
      return Math.hypot(x - x1 - t * dx, y - y1 - t * dy) <= w / 2;
    });
  }

  /** Bilinear sample at a point in mm; undefined outside. */
  sample(x: number, y: number, out: number[]): boolean {
    const fx = (x - this.x0) / this.mmPerPx - 0.5;
    const fy = (y - this.y0) / this.mmPerPx - 0.5;
    const i = Math.floor(fx);
    const j = Math.floor(fy);
    if (i < 0 || j < 0 || i + 1 >= this.width || j + 1 >= this.height) return false;
    const [tx, ty] = [fx - i, fy - j];
    for (let c = 0; c < 3; c++) {
      const k = 3 * (j * this.width + i) + c;
      const top = this.data[k] * (1 - tx) + this.data[k + 3] * tx;
      const k2 = k + 3 * this.width;
      const bottom = this.data[k2] * (1 - tx) + this.data[k2 + 3] * tx;
      out[c] = top * (1 - ty) + bottom * ty;
    }
    return true;
  }
}

const GREEN: Rgb = [38, 74, 52];
const GREEN_LIGHT: Rgb = [58, 102, 72];
const LINING: Rgb = [214, 178, 74];
const BLACK: Rgb = [28, 29, 31];
const RED: Rgb = [150, 36, 30];
const STEEL: Rgb = [168, 168, 160];
const BRASS: Rgb = [190, 156, 70];
const FRAME_RED: Rgb = [92, 36, 30];
const GUNMETAL: Rgb = [120, 112, 92];

function paintEngine(r: FlatRaster) {
  const { axlesMm, frameLengthMm: L, cabPanel: cab, tankPanel: tank } = kestrelPrototype;
  const plateTop = FRAME_TOP - 53.8;
  // Sky, distant hedge, ballast and the rail.
  for (let y = r.y0; y < RAIL_Y; y += 200) {
    const t = Math.min(1, Math.max(0, (y - r.y0) / (RAIL_Y - r.y0)));
    r.rect(r.x0, y, r.x0 + r.width * r.mmPerPx, y + 200, [
      Math.round(196 - 40 * t),
      Math.round(212 - 30 * t),
      Math.round(226 - 50 * t),
    ]);
  }
  r.rect(r.x0, 3000, r.x0 + r.width * r.mmPerPx, RAIL_Y, [112, 128, 96]);
  r.rect(r.x0, RAIL_Y, r.x0 + r.width * r.mmPerPx, r.y0 + r.height * r.mmPerPx, [122, 114, 104]);
  r.rect(r.x0, RAIL_Y, r.x0 + r.width * r.mmPerPx, RAIL_Y + 90, [92, 88, 84]);
  for (let x = Math.ceil(r.x0 / 700) * 700; x < r.x0 + r.width * r.mmPerPx; x += 700) {
    r.rect(x, RAIL_Y + 90, x + 260, RAIL_Y + 200, [84, 66, 52]);
  }

  // Frames with the hornblocks in their cut-outs, running plate, buffer beams and buffers.
  const f = kestrelFrame;
  r.rect(0, FRAME_TOP, L, FRAME_TOP + proto(f.depthIn), FRAME_RED);
  for (const ax of axlesMm) {
    const half = proto(f.cutoutWidthIn / 2);
    const cutTop = FRAME_TOP + proto(f.depthIn - f.cutoutDepthIn);
    r.rect(
      ax - half - proto(0.5),
      cutTop - proto(0.3),
      ax + half + proto(0.5),
      FRAME_TOP + proto(f.depthIn + 0.125),
      GUNMETAL,
    );
    r.rect(
      ax - proto(0.75),
      cutTop + proto(0.45),
      ax + proto(0.75),
      FRAME_TOP + proto(f.depthIn + 0.125),
      BLACK,
    );
  }
  r.rect(-150, plateTop, L + 150, FRAME_TOP, BLACK);
  for (const [x1, x2, bx] of [
    [-150, 0, -600],
    [L, L + 150, L + 600],
  ]) {
    r.rect(x1, 2300, x2, 2950, RED);
    r.rect(Math.min(bx, x1), 2560, Math.max(bx, x2), 2690, STEEL);
    r.rect(bx - 30, 2440, bx + 30, 2810, STEEL);
  }

  // Smokebox, chimney, boiler top and dome, side tank (lined).
  r.rect(250, 1150, 1450, plateTop, BLACK);
  r.rect(620, 600, 930, 1150, BLACK);
  r.rect(570, 520, 980, 610, BLACK);
  r.rect(1450, 1050, 5700, 1200, GREEN);
  r.rect(3000, 880, 3500, 1050, BRASS);
  r.rect(1450, 1200, 5700, plateTop, GREEN);
  r.frame(tank.x, tank.y, tank.x + tank.widthMm, tank.y + tank.heightMm, 30, LINING);

  // Cab: the side panel is a lined rectangle of known size; roof above, bunker behind.
  r.rect(5700, 590, 7650, 680, BLACK);
  r.rect(cab.x, cab.y, cab.x + cab.widthMm, cab.y + cab.heightMm, GREEN_LIGHT);
  r.frame(cab.x, cab.y, cab.x + cab.widthMm, cab.y + cab.heightMm, 32, LINING);
  r.rect(6050, 900, 6700, 1420, [44, 54, 66]);
  r.rect(7324, 1500, L, plateTop, GREEN);
  r.frame(7400, 1580, L - 80, plateTop - 80, 28, LINING);

  // Wheels with spokes, the coupling rod on the crank pins.
  for (const ax of axlesMm) {
    r.disc(ax, AXLE_Y, WHEEL_R, STEEL, WHEEL_R - 55);
    r.disc(ax, AXLE_Y, WHEEL_R - 55, GREEN);
    for (let k = 0; k < 14; k++) {
      const a = (k * Math.PI * 2) / 14;
      r.line(
        ax,
        AXLE_Y,
        ax + Math.cos(a) * (WHEEL_R - 70),
        AXLE_Y + Math.sin(a) * (WHEEL_R - 70),
        45,
        GREEN_LIGHT,
      );
    }
    r.disc(ax, AXLE_Y, 120, BLACK);
    r.disc(ax, AXLE_Y, 45, STEEL);
  }
  const crankY = AXLE_Y + 300;
  r.line(axlesMm[0], crankY, axlesMm[1], crankY, 80, STEEL);
  for (const ax of axlesMm) r.disc(ax, crankY, 65, BLACK);
}

/** Deterministic grain so the stand-in photo is not flat colour (a small LCG). */
function grain(seed: number) {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32 - 0.5;
  };
}

/** The stand-in photo (JPEG) and the mapping from prototype mm to its pixels. */
export function buildDemoPhotoJpeg(): {
  jpeg: Buffer;
  toPhoto: (p: SheetPointDto) => SheetPointDto;
} {
  const H = photoMapping();
  const { width, height } = demoPhotoSize;
  // The flat raster covers what the photo's corners see, at 5 mm per pixel.
  const seen = [
    { x: 0, y: 0 },
    { x: width, y: 0 },
    { x: width, y: height },
    { x: 0, y: height },
  ].map((p) => applyHomography(H, p));
  const xs = seen.map((p) => p.x);
  const ys = seen.map((p) => p.y);
  const mmPerPx = 5;
  const x0 = Math.min(...xs) - 20;
  const y0 = Math.min(...ys) - 20;
  const flat = new FlatRaster(
    x0,
    y0,
    mmPerPx,
    Math.ceil((Math.max(...xs) - x0 + 20) / mmPerPx),
    Math.ceil((Math.max(...ys) - y0 + 20) / mmPerPx),
  );
  paintEngine(flat);

  const rgba = Buffer.alloc(width * height * 4);
  const px = [0, 0, 0];
  const noise = grain(11);
  const m = H.matrix;
  for (let j = 0; j < height; j++) {
    for (let i = 0; i < width; i++) {
      const [x, y] = [i + 0.5, j + 0.5];
      const w = m[6] * x + m[7] * y + m[8];
      const u = (m[0] * x + m[1] * y + m[2]) / w;
      const v = (m[3] * x + m[4] * y + m[5]) / w;
      if (!flat.sample(u, v, px)) px.fill(180);
      const n = noise() * 10;
      // A little vignetting, as a real lens gives.
      const d = Math.hypot((i - width / 2) / width, (j - height / 2) / height);
      const shade = 1 - 0.22 * d * d;
      const k = 4 * (j * width + i);
      rgba[k] = px[0] * shade + n;
      rgba[k + 1] = px[1] * shade + n;
      rgba[k + 2] = px[2] * shade + n;
      rgba[k + 3] = 255;
    }
  }
  const encoded = jpeg.encode({ data: rgba, width, height }, 86);
  const toPhoto = (p: SheetPointDto) => {
    const q = planeToSheet(H, p);
    return { x: round(q.x), y: round(q.y) };
  };
  return { jpeg: Buffer.from(encoded.data), toPhoto };
}

// ---------------------------------------------------------------------------------------------
// Calibrations, pins and the measurement

export interface DemoSheetFigures {
  frame: { calibration: SheetCalibrationDto; pins: Pin[]; mmPerPx: number };
  details: { calibration: SheetCalibrationDto; pins: Pin[]; mmPerPx: number };
  photo: {
    calibration: SheetCalibrationDto;
    pins: Pin[];
    measurements: Measurement[];
    /** The wheelbase between the two hub pins: on the prototype, and brought to the model. */
    wheelbase: {
      prototypeMm: number;
      prototypeUncertaintyMm: number;
      modelMm: number;
      modelUncertaintyMm: number;
      modelIn: number;
    };
  };
}

/** Everything the demo sheets carry, as plain data (no database needed). */
export function demoSheetFigures(toPhoto = buildDemoPhotoJpeg().toPhoto): DemoSheetFigures {
  const f = kestrelFrame;
  const front = s1px(0, 0);
  const rear = s1px(f.lengthIn, 0);
  const frame: DemoSheetFigures['frame'] = {
    calibration: {
      method: 'two-point',
      reference: {
        a: front,
        b: rear,
        length: '30 1/4 in',
        lengthMm: f.lengthIn * MM_PER_IN,
        tolMm: 0,
      },
      checks: [
        {
          a: { x: rear.x, y: rear.y },
          b: s1px(f.lengthIn, f.depthIn - 1),
          length: '3 1/2 in',
          lengthMm: 3.5 * MM_PER_IN,
          tolMm: 0,
        },
      ],
      modelScale: null,
      pickErrorPx: 2,
    },
    pins: [
      { id: 'k1-front-top', ...front, label: 'front end, top edge' },
      { id: 'k1-rear-top', ...rear, label: 'rear end, top edge' },
      { id: 'k1-axle-1', ...s1px(f.axlesIn[0], f.depthIn), label: 'leading axle centre line' },
      { id: 'k1-axle-2', ...s1px(f.axlesIn[1], f.depthIn), label: 'trailing axle centre line' },
      {
        id: 'k1-stretcher-rear',
        ...s1px(f.stretchers[2].u, f.stretchers[2].v[0]),
        label: 'rear stretcher hole (position along not dimensioned)',
      },
    ],
    mmPerPx: MM_PER_IN / 50,
  };

  const h = kestrelHornblock;
  const hbLeft = s2px(S2.hbX, S2.hbY);
  const hbRight = s2px(S2.hbX + h.widthIn * S2.ptPerIn, S2.hbY);
  const hbHole = (side: number, v: number) =>
    s2px(S2.hbX + S2.ptPerIn * (h.widthIn / 2 + side * h.holeOffsetIn), S2.hbY + S2.ptPerIn * v);
  const st = kestrelHornStay;
  const stayHole = (side: number) =>
    s2px(
      S2.stayX + S2.ptPerIn * (st.lengthIn / 2 + (side * st.holeCentresIn) / 2),
      S2.stayY + S2.ptPerIn * st.holeVIn,
    );
  const details: DemoSheetFigures['details'] = {
    calibration: {
      method: 'two-point',
      reference: {
        a: hbLeft,
        b: hbRight,
        length: '3 1/4 in',
        lengthMm: h.widthIn * MM_PER_IN,
        tolMm: 0,
      },
      checks: [
        {
          a: hbLeft,
          b: s2px(S2.hbX, S2.hbY + h.heightIn * S2.ptPerIn),
          length: '2 3/4 in',
          lengthMm: h.heightIn * MM_PER_IN,
          tolMm: 0,
        },
      ],
      modelScale: null,
      pickErrorPx: 2,
    },
    pins: [
      { id: 'k2-hb-left', ...hbLeft, label: 'hornblock, top left corner' },
      { id: 'k2-hb-right', ...hbRight, label: 'hornblock, top right corner' },
      {
        id: 'k2-hb-hole-1',
        ...hbHole(-1, h.holeRowsIn[0]),
        label: 'hornblock bolt hole, top left',
      },
      { id: 'k2-stay-hole-1', ...stayHole(-1), label: 'horn stay hole, left' },
      { id: 'k2-stay-hole-2', ...stayHole(1), label: 'horn stay hole, right' },
    ],
    mmPerPx: MM_PER_IN / 150,
  };

  const p = kestrelPrototype;
  const tank = p.tankPanel;
  const corners = [
    toPhoto({ x: tank.x, y: tank.y }),
    toPhoto({ x: tank.x + tank.widthMm, y: tank.y }),
    toPhoto({ x: tank.x + tank.widthMm, y: tank.y + tank.heightMm }),
    toPhoto({ x: tank.x, y: tank.y + tank.heightMm }),
  ] as [SheetPointDto, SheetPointDto, SheetPointDto, SheetPointDto];
  const hubs = p.axlesMm.map((x) => toPhoto({ x, y: p.axleYMm }));
  const tyreTop = toPhoto({ x: p.axlesMm[0], y: p.axleYMm - WHEEL_R });
  const tyreBottom = toPhoto({ x: p.axlesMm[0], y: p.axleYMm + WHEEL_R });
  const calibration: SheetCalibrationDto = {
    method: 'four-point',
    corners,
    width: p.tankPanelText.width,
    widthMm: tank.widthMm,
    height: p.tankPanelText.height,
    heightMm: tank.heightMm,
    checks: [
      {
        a: tyreTop,
        b: tyreBottom,
        length: p.wheelDiameterText,
        lengthMm: p.wheelDiameterMm,
        tolMm: 0,
      },
    ],
    modelScale: demoModelScale,
    pickErrorPx: 2,
  };
  const cal = engineCalibration(calibration);
  const measured = measureBetweenPins(cal, hubs[0], hubs[1], { pickErrorPx: 2 });
  const model = prototypeToModel(measured, parseModelScale(demoModelScale).ratio);
  const labels = ['top front', 'top rear', 'bottom rear', 'bottom front'];
  return {
    frame,
    details,
    photo: {
      calibration,
      pins: [
        ...corners.map((c, i) => ({
          id: `ph-tank-${i + 1}`,
          ...c,
          label: `side tank panel, ${labels[i]} corner`,
        })),
        { id: 'ph-hub-1', ...hubs[0], label: 'leading wheel, hub centre' },
        { id: 'ph-hub-2', ...hubs[1], label: 'trailing wheel, hub centre' },
        { id: 'ph-tyre-top', ...tyreTop, label: 'leading wheel, top of tyre' },
      ],
      measurements: [
        {
          id: 'ph-wheelbase',
          from: 'ph-hub-1',
          to: 'ph-hub-2',
          dimension: 'frame_photo_wheelbase',
        },
      ],
      wheelbase: {
        prototypeMm: measured.lengthMm,
        prototypeUncertaintyMm: measured.uncertaintyMm,
        modelMm: model.lengthMm,
        modelUncertaintyMm: model.uncertaintyMm,
        modelIn: model.lengthMm / MM_PER_IN,
      },
    },
  };
}

export interface DemoSheets {
  frame: Sheet;
  details: Sheet;
  photo: Sheet;
  figures: DemoSheetFigures;
}

/**
 * Generates the drawing and the photo, uploads them through the sheet service and saves their
 * calibrations, pins and the photo's wheelbase measurement. Call once, when the demo project is
 * made. Answers the sheets and every figure used (pixel positions, lengths).
 */
export async function seedDemoSheets(
  db: Db,
  storage: BlobStorage,
  projectId: string,
  userId: string,
): Promise<DemoSheets> {
  const sheets = createSheetService({ db, storage });
  const photo = buildDemoPhotoJpeg();
  const figures = demoSheetFigures(photo.toPhoto);
  const [page1, page2, picture] = await sheets.upload(projectId, userId, [
    { originalName: 'kestrel-K1-frames.pdf', bytes: await buildDemoDrawingPdf() },
    { originalName: 'kestrel-prototype-side.jpg', bytes: photo.jpeg },
  ]);
  const frame = await sheets.update(projectId, page1.id, {
    revision: page1.revision,
    title: 'K-1 sheet 1 — frame plate, side view',
    calibration: figures.frame.calibration,
    pins: figures.frame.pins,
  });
  const details = await sheets.update(projectId, page2.id, {
    revision: page2.revision,
    title: 'K-1 sheet 2 — hornblock and horn stay',
    calibration: figures.details.calibration,
    pins: figures.details.pins,
  });
  const photoSheet = await sheets.update(projectId, picture.id, {
    revision: picture.revision,
    title: 'Prototype photo (stand-in) — engine side',
    calibration: figures.photo.calibration,
    pins: figures.photo.pins,
    measurements: figures.photo.measurements,
  });
  return { frame, details, photo: photoSheet, figures };
}
