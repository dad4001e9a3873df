// The demo drawing (invented; every name and figure in it is ours): two A3 pages of the Kestrel
// frames made with pdfkit, drawn from the design in kestrel-design.ts.
import { createRequire } from 'node:module';
import PDFDocument from 'pdfkit';
import { kestrelFrame, kestrelHornblock, kestrelHornStay, S1, s1pt, S2 } from './kestrel-design';

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
  const [a1, a2] = f.axlesIn;
  const [c1, c2, c3] = f.printedChain;
  const chain = [
    [0, a1, c1],
    [a1, a2, c2],
    [a2, f.lengthIn, c3],
  ] as const;
  chain.forEach(([from, to, text], i) => {
    dimH(doc, P(from, 0).x, P(to, 0).x, chainY, text, i === 0 ? bottom : undefined);
  });
  doc
    .lineWidth(0.4)
    .moveTo(P(f.lengthIn, 0).x, P(0, f.depthIn - 1).y + 2)
    .lineTo(P(f.lengthIn, 0).x, chainY + 3)
    .stroke();
  // Cut-out width and depth (leading hornblock), hole offset and rows (trailing hornblock).
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
