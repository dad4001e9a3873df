import type { Measurement, Pin, Sheet, SheetCalibrationDto } from '@shared/api';
import { applyItems, diffItems, sameJson, type ItemChange } from '@shared/engine';
import type { DocumentKind } from './versioned-document';

/** What a canvas edit can change: the part of a sheet that undo steps through and PATCH saves. */
export interface SheetEdits {
  rotation: Sheet['rotation'];
  straighten: number;
  calibration: SheetCalibrationDto | null;
  pins: Pin[];
  measurements: Measurement[];
}

/** What changed between two versions of a sheet's edits, in the shape of the engine's ModelDiff. */
export interface SheetChanges {
  rotation?: { from: SheetEdits['rotation']; to: SheetEdits['rotation'] };
  straighten?: { from: number; to: number };
  calibration?: { from: SheetCalibrationDto | null; to: SheetCalibrationDto | null };
  pins: ItemChange<Pin>[];
  measurements: ItemChange<Measurement>[];
}

/** The edits of a sheet (or of a sheet's edits): exactly the fields PATCH saves. */
export const editsOf = (s: SheetEdits): SheetEdits => ({
  rotation: s.rotation,
  straighten: s.straighten,
  calibration: s.calibration,
  pins: s.pins,
  measurements: s.measurements,
});

const byId = (x: { id: string }) => x.id;

/**
 * Pins and measurements are matched by id, the turn, straightening and calibration compared
 * whole.
 *
 * @example diffSheet(base, mine).pins // [{ key: 'p3', change: 'changed', fields: [{ field: 'x', from: 10, to: 12 }] }]
 */
export function diffSheet(before: SheetEdits, after: SheetEdits): SheetChanges {
  const field = <K extends 'rotation' | 'straighten' | 'calibration'>(k: K) =>
    sameJson(before[k], after[k]) ? {} : { [k]: { from: before[k], to: after[k] } };
  return {
    ...field('rotation'),
    ...field('straighten'),
    ...field('calibration'),
    pins: diffItems(before.pins, after.pins, byId),
    measurements: diffItems(before.measurements, after.measurements, byId),
  };
}

/** Replays sheet changes on another version of the sheet (see the engine's `applyDiff`). */
export function applySheetChanges(doc: SheetEdits, changes: SheetChanges): SheetEdits {
  return {
    rotation: changes.rotation ? changes.rotation.to : doc.rotation,
    straighten: changes.straighten ? changes.straighten.to : doc.straighten,
    calibration: changes.calibration ? changes.calibration.to : doc.calibration,
    pins: applyItems(doc.pins, changes.pins, byId),
    measurements: applyItems(doc.measurements, changes.measurements, byId),
  };
}

export const sheetDocument: DocumentKind<SheetEdits, SheetChanges> = {
  snapshot: (doc) => JSON.stringify(editsOf(doc)),
  restore: (text) => JSON.parse(text) as SheetEdits,
  diff: diffSheet,
  apply: applySheetChanges,
  isEmpty: (c) =>
    !c.rotation &&
    !c.straighten &&
    !c.calibration &&
    c.pins.length === 0 &&
    c.measurements.length === 0,
};
