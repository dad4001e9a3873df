import {
  measurementNameProblem,
  measureOnSheet,
  scaledDimension,
  type SheetMeasure,
} from '@shared/api';
import type { FairsheetModelInput } from '@shared/engine';
import { useModelStore } from '@/stores/model';
import { useSheetsStore, type MeasureRequest } from '@/stores/sheets';

type Dimension = FairsheetModelInput['dimensions'][number];

export type { MeasureRequest };

/**
 * Measurements between pins and the `scaled` dimensions they keep in the model. A new or
 * re-taken measurement is one server operation (the sheets store's `measure`): the server
 * measures with the same shared functions this shows the figure with, and writes the sheet's
 * record and the model's dimension together.
 */
export function useSheetMeasurements() {
  const sheets = useSheetsStore();
  const model = useModelStore();

  function measure(from: string, to: string): SheetMeasure | null {
    const built = sheets.calibration.built;
    const a = sheets.pinsById.get(from);
    const b = sheets.pinsById.get(to);
    if (!built || !a || !b || (a.x === b.x && a.y === b.y)) return null;
    try {
      return measureOnSheet(built, a, b);
    } catch {
      return null;
    }
  }

  /** Why a name cannot be used for this measurement, or '' when it can. */
  function nameProblem(name: string, previousName?: string): string {
    const sheet = sheets.current;
    if (!sheet) return '';
    return measurementNameProblem(model.model, sheet, name, previousName);
  }

  /** Creates or updates the scaled dimension and the sheet's record of it, on the server. */
  async function commit(req: MeasureRequest): Promise<string> {
    const problem = nameProblem(req.name, req.previousName);
    if (problem) return problem;
    if (!measure(req.from, req.to)) return 'Calibrate the sheet first, and use two different pins';
    return sheets.measure(req);
  }

  /**
   * Re-writes every scaled dimension this sheet measures after its calibration or a pin moved,
   * as one model edit. A dimension the builder has since made stated or assumed is left alone.
   */
  function syncAll() {
    const sheet = sheets.current;
    if (!sheet) return;
    const updates: Dimension[] = [];
    for (const rec of sheet.measurements) {
      const d = model.model.dimensions.find((x) => x.name === rec.dimension);
      if (!d || d.kind !== 'scaled' || (d.sheet && d.sheet !== sheet.id)) continue;
      const m = measure(rec.from, rec.to);
      if (!m) continue;
      const next = {
        ...d,
        ...scaledDimension({
          name: d.name,
          label: d.label ?? '',
          measure: m,
          unit: model.model.units,
          sheetId: sheet.id,
        }),
      };
      if (next.value !== d.value || next.tol !== d.tol) updates.push(next);
    }
    if (!updates.length) return;
    model.edit((mdl) => {
      for (const u of updates) {
        const at = mdl.dimensions.findIndex((x) => x.name === u.name);
        if (at >= 0) mdl.dimensions[at] = u;
      }
    });
  }

  /** The first free name of the form `scaled_1`, `scaled_2`, … */
  function suggestName(): string {
    const used = new Set(model.model.dimensions.map((d) => d.name));
    let n = 1;
    while (used.has(`scaled_${n}`)) n += 1;
    return `scaled_${n}`;
  }

  return { measure, commit, syncAll, nameProblem, suggestName };
}
