import { randomBytes } from 'node:crypto';
import {
  buildSheetCalibration,
  measurementNameProblem,
  measureOnSheet,
  putDimension,
  putMeasurementRecord,
  scaledDimension,
  type MeasureAnswer,
  type Measurement,
  type Pin,
  type SheetCalibrationDto,
} from '@shared/api';
import {
  CalibrationError,
  diffModels,
  isEmptyDiff,
  modelSchema,
  type FairsheetModel,
} from '@shared/engine';
import type { z } from 'zod';
import type { measureBody } from '@shared/api';
import type { Db } from '../db/client';
import * as sheetsRepo from '../db/sheets';
import { badRequest, conflict, notFound, unprocessable } from '../http/errors';
import type { ModelService } from './models';
import { toSheet } from './sheets';

export type MeasureRequest = z.output<typeof measureBody>;

const staleSheet = (row: sheetsRepo.SheetWithFile, revision: number) =>
  conflict(
    `Someone else changed this sheet (now revision ${row.revision}) after the revision ${revision} you measured on.`,
    { currentRevision: row.revision, sheet: toSheet(row) },
  );

/**
 * A measurement between two pins as one operation: the server measures with the sheet's stored
 * calibration and pins (the engine's `measureBetweenPins`, through `measureOnSheet`), writes the
 * scaled dimension as a new model revision and the sheet's record of it, in one transaction
 * holding both rows locked. A stale revision of either answers 409 and writes neither.
 */
export function createMeasurementService(db: Db, models: ModelService) {
  async function measure(
    projectId: string,
    sheetId: string,
    userId: string,
    body: MeasureRequest,
  ): Promise<MeasureAnswer> {
    // Read and worked out before any lock, so the solve waits for a thread holding no row; the
    // revisions are checked again under the locks, which makes what was read what is written.
    const [sheetRow, stored] = await Promise.all([
      sheetsRepo.findSheet(db, projectId, sheetId),
      models.current(projectId),
    ]);
    if (!sheetRow) throw notFound('The sheet');
    if (sheetRow.revision !== body.sheetRevision) throw staleSheet(sheetRow, body.sheetRevision);
    if (stored.revision !== body.modelRevision) {
      throw conflict(
        `Someone else saved revision ${stored.revision} after the revision ${body.modelRevision} you edited.`,
        { currentRevision: stored.revision, model: stored.model },
      );
    }
    const sheet = toSheet(sheetRow);
    const { dimension: name, previousName } = body;

    const problem = measurementNameProblem(stored.model, sheet, name, previousName);
    if (problem) throw badRequest(problem, { fields: [{ path: 'dimension', message: problem }] });
    const pins = new Map(sheet.pins.map((p: Pin) => [p.id, p]));
    const [a, b] = [pins.get(body.from), pins.get(body.to)];
    for (const [id, pin] of [
      [body.from, a],
      [body.to, b],
    ] as const) {
      if (!pin) throw badRequest(`Pin "${id}" is not on the sheet.`, { pin: id });
    }
    if (body.from === body.to) throw badRequest('A measurement needs two different pins.');
    if (!sheet.calibration) {
      throw unprocessable(
        'Calibrate this sheet first: a length needs to know how long a pixel is.',
      );
    }

    let m: ReturnType<typeof measureOnSheet>;
    try {
      m = measureOnSheet(buildSheetCalibration(sheet.calibration as SheetCalibrationDto), a!, b!);
    } catch (err) {
      if (!(err instanceof CalibrationError)) throw err;
      throw unprocessable(`The length cannot be measured: ${err.message}.`, {
        calibrationError: err.code,
      });
    }

    const model = structuredClone(stored.model);
    const existing = model.dimensions.find((d) => d.name === (previousName ?? name));
    const dimension = scaledDimension({
      name,
      label: body.label ?? '',
      measure: m,
      unit: model.units,
      sheetId,
      existing,
    });
    putDimension(model, dimension, previousName);
    const checked = modelSchema.safeParse(model);
    if (!checked.success) {
      // A failed parse has at least one issue.
      throw unprocessable(
        `The model would not be valid with this measurement: ${checked.error.issues[0]!.message}.`,
      );
    }
    const next: FairsheetModel = checked.data;
    const measurements = putMeasurementRecord(
      sheet.measurements,
      { from: body.from, to: body.to, dimension: name, previousName },
      () => `m${randomBytes(6).toString('hex')}`,
    );
    const changed = !isEmptyDiff(diffModels(stored.model, next));
    const solved = await models.solveRevision(next);

    return db.transaction(async (tx) => {
      // The sheet first, then the model: every measurement takes the two locks in this order.
      const locked = await sheetsRepo.lockSheet(tx, projectId, sheetId);
      if (!locked) throw notFound('The sheet');
      if (locked.revision !== body.sheetRevision) throw staleSheet(locked, body.sheetRevision);
      const saved = await models.writeRevision(tx, {
        projectId,
        userId,
        baseRevision: body.modelRevision,
        model: next,
        solved,
        // A re-measure that moves nothing writes no model revision.
        note: changed ? `${name} measured on “${sheet.title}”` : undefined,
      });
      const updated = await sheetsRepo.updateSheet(tx, sheetId, {
        measurements: measurements as Measurement[],
        revision: locked.revision + 1,
      });
      return {
        sheet: toSheet({ ...updated, file: locked.file }),
        model: { revision: saved.revision, model: next, summary: saved.summary },
        dimension: name,
      };
    });
  }

  return { measure };
}

export type MeasurementService = ReturnType<typeof createMeasurementService>;
