import { z } from 'zod';

/**
 * Sheets: uploaded drawing pages and photos, with their calibration, pins and measurements.
 *
 * Coordinates are in the sheet's own pixel frame, before rotation: for an image, its natural
 * pixels; for a PDF page, the page rendered at 150 dpi (PDF points × 150/72). Rotation and
 * straightening are view settings applied on top, so pins never move when the view turns.
 */

export const sheetKind = z.enum(['drawing', 'photo']);
export type SheetKind = z.infer<typeof sheetKind>;

export const pdfFrameDpi = 150;

export const sheetPoint = z.object({ x: z.number().finite(), y: z.number().finite() });
export type SheetPointDto = z.infer<typeof sheetPoint>;

/** A known length between two picked points; `length` as typed ("6 1/4", "150 mm"). */
export const knownLength = z.object({
  a: sheetPoint,
  b: sheetPoint,
  length: z.string().trim().min(1).max(40),
  lengthMm: z.number().positive(),
  /** ± on the known length itself, mm (0 when exact, e.g. a stated overall). */
  tolMm: z.number().nonnegative().default(0),
});
export type KnownLength = z.infer<typeof knownLength>;

const calibrationCommon = {
  /** Further known lengths, beyond those the method needs: the residual is shown for them. */
  checks: z.array(knownLength).max(20).default([]),
  /** For a photo of the full-size prototype: "1:8", "1 1/2 in to the foot"; lengths divide by it. */
  modelScale: z.string().trim().max(40).nullable().default(null),
  /** Pick error per point in pixels (default 2). */
  pickErrorPx: z.number().positive().max(50).default(2),
};

export const sheetCalibration = z.discriminatedUnion('method', [
  z.object({ method: z.literal('two-point'), reference: knownLength, ...calibrationCommon }),
  z.object({
    method: z.literal('per-axis'),
    horizontal: knownLength,
    vertical: knownLength,
    ...calibrationCommon,
  }),
  z.object({
    method: z.literal('four-point'),
    /** Corners of a rectangle of known size, in order: top-left, top-right, bottom-right, bottom-left. */
    corners: z.tuple([sheetPoint, sheetPoint, sheetPoint, sheetPoint]),
    width: z.string().trim().min(1).max(40),
    widthMm: z.number().positive(),
    height: z.string().trim().min(1).max(40),
    heightMm: z.number().positive(),
    ...calibrationCommon,
  }),
]);
export type SheetCalibrationDto = z.infer<typeof sheetCalibration>;

export const pin = z.object({
  id: z.string().min(1).max(40),
  x: z.number().finite(),
  y: z.number().finite(),
  label: z.string().max(80).default(''),
});
export type Pin = z.infer<typeof pin>;

/** A measurement between two pins, kept as a `scaled` dimension of the model named `dimension`. */
export const measurement = z.object({
  id: z.string().min(1).max(40),
  from: z.string().min(1),
  to: z.string().min(1),
  dimension: z.string().min(1).max(80),
});
export type Measurement = z.infer<typeof measurement>;

export const sheet = z.object({
  id: z.uuid(),
  projectId: z.uuid(),
  title: z.string(),
  kind: sheetKind,
  /** 1-based page of a PDF; 1 for an image. */
  page: z.number().int().positive(),
  pageCount: z.number().int().positive(),
  widthPx: z.number().positive(),
  heightPx: z.number().positive(),
  /** Quarter turns of the view, degrees. */
  rotation: z.union([z.literal(0), z.literal(90), z.literal(180), z.literal(270)]),
  /** Small correction so an edge that should be level is level, degrees. */
  straighten: z.number().min(-45).max(45),
  calibration: sheetCalibration.nullable(),
  pins: z.array(pin),
  measurements: z.array(measurement),
  file: z.object({
    sha256: z.string(),
    mimeType: z.string(),
    originalName: z.string(),
    sizeBytes: z.number().int().nonnegative(),
  }),
  /** Bumped by every PATCH; a PATCH naming an older one is refused with 409. */
  revision: z.number().int().nonnegative(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Sheet = z.infer<typeof sheet>;

export const sheetParams = z.object({
  projectId: z.uuid({ message: 'Not a project id' }),
  sheetId: z.uuid({ message: 'Not a sheet id' }),
});

export const updateSheetBody = z
  .object({
    revision: z.number().int().nonnegative(),
    title: z.string().trim().min(1).max(200),
    kind: sheetKind,
    rotation: sheet.shape.rotation,
    straighten: sheet.shape.straighten,
    calibration: sheetCalibration.nullable(),
    pins: z.array(pin).max(20_000),
    measurements: z.array(measurement).max(20_000),
  })
  .partial()
  .required({ revision: true });
export type UpdateSheetBody = z.input<typeof updateSheetBody>;

export const sheetList = z.object({ sheets: z.array(sheet) });
