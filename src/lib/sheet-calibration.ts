import {
  buildSheetCalibration,
  measuredTolerance,
  referenceOf,
  type BuiltCalibration,
  type SheetCalibrationDto,
} from '@shared/api';
import {
  CalibrationError,
  QuantityError,
  checkCalibration,
  convertLength,
  formatLength,
  parseModelScale,
  parseQuantity,
  type CalibrationCheck,
  type ModelUnit,
} from '@shared/engine';

export interface CalibrationResidual {
  checks: readonly CalibrationCheck[];
  rmsMm: number;
  maxAbsMm: number;
}

export { referenceOf, type BuiltCalibration };

/** The engine's calibration for a stored one (shared with the server). */
export const buildCalibration = buildSheetCalibration;

/** Builds a calibration, answering the error message instead of throwing. */
export function tryBuildCalibration(dto: SheetCalibrationDto | null): {
  built: BuiltCalibration | null;
  error: string | null;
} {
  if (!dto) return { built: null, error: null };
  try {
    return { built: buildCalibration(dto), error: null };
  } catch (err) {
    return { built: null, error: err instanceof Error ? err.message : String(err) };
  }
}

/**
 * The residuals of the extra known lengths (`checks`), on the sheet's own plane (for a
 * prototype photo: full size, as the check lengths were typed).
 */
export function calibrationResidual(
  built: BuiltCalibration,
  dto: SheetCalibrationDto,
): CalibrationResidual | null {
  const checks = dto.checks ?? [];
  if (checks.length === 0) return null;
  try {
    return checkCalibration(built.cal, checks.map(referenceOf));
  } catch {
    return null;
  }
}

export type LengthParse = { ok: true; mm: number } | { ok: false; message: string };

/**
 * A length as typed ("6 1/4", `1-3/16"`, "150 mm", "2' 6\""); a bare number is taken in the
 * project's unit. Answers a message instead of throwing, so the field keeps what was typed.
 */
export function parseLength(text: string, unit: ModelUnit, allowZero = false): LengthParse {
  const t = text.trim();
  if (!t) return { ok: false, message: 'Type a length, e.g. 6 1/4 or 150 mm' };
  try {
    const q = parseQuantity(t);
    if (q.dimension === 'angle') return { ok: false, message: 'That is an angle; give a length' };
    const mm = q.dimension === 'plain' ? convertLength(q.value, unit, 'mm') : q.value;
    if (!Number.isFinite(mm) || mm < 0 || (!allowZero && mm === 0)) {
      return { ok: false, message: allowZero ? 'Give 0 or more' : 'A length must be more than 0' };
    }
    return { ok: true, mm };
  } catch (err) {
    if (err instanceof QuantityError) {
      return {
        ok: false,
        message: `Cannot read “${t}”: ${err.message} (at character ${err.at + 1})`,
      };
    }
    return { ok: false, message: err instanceof Error ? err.message : String(err) };
  }
}

/** A model scale as typed ("1:8", "1½ in to the foot"), or the engine's message. */
export function parseScale(
  text: string,
): { ok: true; label: string } | { ok: false; message: string } {
  try {
    return { ok: true, label: parseModelScale(text).label };
  } catch (err) {
    return { ok: false, message: err instanceof CalibrationError ? err.message : String(err) };
  }
}

/** A length in the model unit with its unit, rounded for the model (value) or up (tolerance). */
export function writeLength(mm: number, unit: ModelUnit, roundUp = false): string {
  // A tolerance rounds up, so writing it never makes it better than measured.
  return roundUp ? measuredTolerance(mm, unit) : formatLength(mm, 'mm', unit);
}
