import { DIMENSION_NAME, type FairsheetModelInput } from '@shared/engine';
import { measureOnSheet, writeLength, type SheetMeasure } from '@/lib/sheet-calibration';
import { useModelStore } from '@/stores/model';
import { useSheetsStore } from '@/stores/sheets';

type Dimension = FairsheetModelInput['dimensions'][number];

export interface MeasureRequest {
  from: string;
  to: string;
  name: string;
  label: string;
  /** The dimension's name before a rename. */
  previousName?: string;
}

/**
 * Measurements between pins and the `scaled` dimensions they keep in the model: the value and
 * tolerance are written from the calibration (its uncertainty and the pins' pick error, never
 * below the engine's floor), the sheet's record of which pins measure which dimension is PATCHed
 * with the sheet.
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

  function dimensionOf(name: string, label: string, m: SheetMeasure): Dimension {
    const unit = model.model.units;
    const d: Dimension = {
      name,
      kind: 'scaled',
      quantity: 'length',
      value: writeLength(m.lengthMm, unit),
      tol: writeLength(m.uncertaintyMm, unit, true),
      sheet: sheets.current!.id,
    };
    if (label) d.label = label;
    return d;
  }

  /** Why a name cannot be used for this measurement, or '' when it can. */
  function nameProblem(name: string, previousName?: string): string {
    if (!name) return 'Give the dimension a name';
    if (!DIMENSION_NAME.test(name)) {
      return 'A name is a letter or _ followed by letters, digits or _ (e.g. bore_ctr)';
    }
    if (name === previousName) return '';
    const clash = model.model.dimensions.find((d) => d.name === name);
    if (!clash) return '';
    const ours = sheets.current?.measurements.some((m) => m.dimension === name);
    if (clash.kind === 'scaled' && clash.sheet === sheets.current?.id && ours) {
      return `${name} is already measured on this sheet; pick it in the list to re-measure it`;
    }
    // Measuring an unknown is how a missing dimension gets found: it becomes a scaled figure.
    if (clash.kind === 'derived') return '';
    return `There is already a ${clash.kind} dimension named ${name}`;
  }

  /** Creates or updates the scaled dimension and records the measurement on the sheet. */
  function commit(req: MeasureRequest): string {
    const problem = nameProblem(req.name, req.previousName);
    if (problem) return problem;
    const m = measure(req.from, req.to);
    if (!m) return 'Calibrate the sheet first, and use two different pins';
    const existing = model.model.dimensions.find((d) => d.name === (req.previousName ?? req.name));
    const dim = dimensionOf(req.name, req.label || existing?.label || '', m);
    if (existing?.part) dim.part = existing.part;
    if (existing?.note) dim.note = existing.note;
    model.upsertDimension(dim, req.previousName);
    sheets.putMeasurement(req.from, req.to, req.name, req.previousName);
    model.selected = req.name;
    return '';
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
      const next = { ...d, ...dimensionOf(d.name, d.label ?? '', m) };
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
