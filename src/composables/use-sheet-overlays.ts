import { computed } from 'vue';
import { formatLength, type DimensionKind, type SheetPoint } from '@shared/engine';
import { formatTolerance } from '@/lib/length-format';
import { useModelStore } from '@/stores/model';
import { useSheetsStore } from '@/stores/sheets';

/** A dimension drawn on its sheet: a leader between its two pins, with its value. */
export interface SheetLeader {
  name: string;
  kind: DimensionKind;
  a: SheetPoint;
  b: SheetPoint;
  /** "d_bore = 1.1875 in" */
  text: string;
  /** "± 0.0060" (a derived value: its worst-case stack-up). */
  tolerance: string;
  selected: boolean;
  /** Named as a suspect of a contradiction: drawn so nobody can miss it. */
  suspect: boolean;
}

/**
 * The leaders of the open sheet: every model dimension linked to this sheet that has a
 * measurement between two of its pins, with the live solved value (a derived value shows its
 * worst-case ± stack-up) and whether it is selected or under suspicion.
 */
export function useSheetOverlays() {
  const sheets = useSheetsStore();
  const model = useModelStore();

  return computed<SheetLeader[]>(() => {
    const sheet = sheets.current;
    if (!sheet) return [];
    const unit = model.model.units;
    const result = model.result;
    const suspects = new Set(
      (result?.contradictions ?? []).flatMap((c) => c.suspects.slice(0, 1).map((s) => s.name)),
    );
    const dims = new Map(model.model.dimensions.map((d) => [d.name, d]));
    const pins = sheets.pinsById;
    const out: SheetLeader[] = [];
    for (const m of sheet.measurements) {
      const d = dims.get(m.dimension);
      const a = pins.get(m.from);
      const b = pins.get(m.to);
      if (!d || !a || !b || (d.sheet && d.sheet !== sheet.id)) continue;
      const v = result?.values[d.name];
      const value =
        v?.value !== null && v?.value !== undefined
          ? formatLength(v.value, unit, unit)
          : 'value' in d
            ? String(d.value)
            : '—';
      out.push({
        name: d.name,
        kind: d.kind,
        a,
        b,
        text: `${d.name} = ${value}`,
        tolerance: v ? formatTolerance(v.worstCase, unit, v.quantity) : '',
        selected: model.selected === d.name,
        suspect: suspects.has(d.name),
      });
    }
    return out;
  });
}
