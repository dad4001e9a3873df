// The stand-in photograph of the full-size Kestrel (invented): the side of the engine painted
// flat in prototype millimetres by a small rasteriser, then seen in perspective through a
// homography and encoded as a JPEG.
import jpeg from 'jpeg-js';
import type { SheetPointDto } from '@shared/api';
import {
  applyHomography,
  fitHomography,
  planeToSheet,
  type HomographyCalibration,
} from '@shared/engine';
import {
  AXLE_Y,
  FRAME_TOP,
  kestrelFrame,
  kestrelPrototype,
  proto,
  RAIL_Y,
  round,
  WHEEL_R,
} from './kestrel-design';

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
    // Inside the raster: the four neighbours' entries of data exist.
    if (i < 0 || j < 0 || i + 1 >= this.width || j + 1 >= this.height) return false;
    const [tx, ty] = [fx - i, fy - j];
    for (let c = 0; c < 3; c++) {
      const k = 3 * (j * this.width + i) + c;
      const top = this.data[k]! * (1 - tx) + this.data[k + 3]! * tx;
      const k2 = k + 3 * this.width;
      const bottom = this.data[k2]! * (1 - tx) + this.data[k2 + 3]! * tx;
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
  ] as const) {
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
  const px: [number, number, number] = [0, 0, 0];
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
