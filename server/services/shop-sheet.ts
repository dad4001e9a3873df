import {
  bothUnits,
  clearanceText,
  convertLength,
  drillText,
  lengthNumber,
  otherUnit,
  sizeText,
  tapDrillText,
  toleranceText,
  type FairsheetModel,
  type FeatureLength,
  type FeatureResult,
  type FeatureRow,
  type FeaturesResult,
  type GivenKind,
  type ModelUnit,
} from '@shared/engine';
import {
  SHOP_SHEET_CSV_COLUMNS,
  type PaperSize,
  type ShopSheet,
  type ShopSheetCorrection,
  type ShopSheetDrill,
  type ShopSheetGroup,
  type ShopSheetRow,
} from '@shared/api';
import type { ProjectRow } from '../db/schema';
import { toCsv } from '../http/csv';
import { renderShopSheetPdf } from '../pdf/shop-sheet';
import { defaultSolvePool, type SolvePool } from '../solve/pool';
import type { CurrentModel, ModelService } from './models';

/**
 * What a second person has signed off. Looked up by feature id first, then by the dimension
 * names a position is written as; `void` when an upstream change has voided the check.
 */
export type CheckLookup = (
  dimensionOrFeatureName: string,
) => { state: 'current' | 'void'; checker: string } | undefined;

/** Reviews of a project's figures; checks and corrections plug in here (default: none). */
export interface ShopSheetReviews {
  checkOf?: CheckLookup;
  corrections?: ShopSheetCorrection[];
}

export interface ShopSheetInput {
  project: { id: string; name: string; modelScale: string | null };
  revision: number;
  date: string;
  derivedBy: string | null;
  model: FairsheetModel;
  /** The model's features evaluated (`evaluateFeatures`), on the solve pool's threads. */
  features: FeaturesResult;
}

export const SHEET_CAUTIONS = [
  'Derived dimensions are inferences from the drawing set, not measurements. Verify every position against the mating parts and the actual material before cutting.',
  'Machine-shop safety: guards in place and eye protection on; work clamped or held in a vice, never by hand; chuck key out before starting; no gloves, loose sleeves or hair near a turning spindle; clear swarf with a brush, never fingers; stop the machine before measuring.',
  'Spindle speeds are starting points for HSS drills at the low end of the material’s range; go slower for deep holes, long drills or a light machine, and never above the machine’s rated speed.',
];

export const PRESSURE_CAUTION =
  'Pressure-bearing part: its design and its tests must follow the applicable boiler code and the inspection of the local club or authority. Fairsheet makes no pressure-vessel calculation; written or approved figures only.';

const GLUE = ', ';

/**
 * A position's cell: the length in the model's unit and in the other, each written by the
 * engine (`lengthNumber`), as the workspace writes them; the unit stands in the column's head.
 */
export function lengthCell(l: FeatureLength, units: ModelUnit): ShopSheetRow['x'] {
  if (l.value === null) return { value: null, other: null, text: '—', otherText: '—' };
  const o = convertLength(l.value, units, otherUnit(units));
  return {
    value: l.value,
    other: o,
    text: lengthNumber(l.value, units),
    otherText: lengthNumber(o, otherUnit(units)),
  };
}

/** A hole's depth in both units, the model's first; or `through`. */
function depthText(d: FeatureResult['depth'], units: ModelUnit): string {
  if (d === 'through') return 'through';
  return d.value === null ? '—' : bothUnits(d.value, units);
}

function provenanceText(x: FeatureLength, y: FeatureLength): string {
  const direct = [x.provenance, y.provenance];
  if (direct.every((p) => p === 'datum')) return 'on datum';
  const kinds = new Set<GivenKind>([...x.restsOn, ...y.restsOn]);
  const words = (['stated', 'scaled', 'assumed', 'asbuilt'] as const)
    .filter((k) => kinds.has(k))
    .map((k) => (k === 'asbuilt' ? 'as built' : k));
  if (direct.some((p) => p === 'derived'))
    return `derived (${words.join(GLUE) || 'no given value'})`;
  return words.join(GLUE) || 'on datum';
}

function checkOfRow(
  f: FeatureResult,
  row: FeatureRow,
  lookup: CheckLookup | undefined,
): ShopSheetRow['check'] {
  const none = { state: 'not-checked' as const, text: 'not checked', checkers: [] };
  if (!lookup) return none;
  const own = lookup(f.id);
  // Only derived positions need a second person's check; figures as drawn stand on the drawing.
  // A pattern's holes rest on the feature's written position (its centre or first hole).
  const written = row.index === null ? [row.x, row.y] : [f.x, f.y];
  const names = own ? [] : written.filter((c) => c.provenance === 'derived').map((c) => c.expr);
  if (!own && names.length === 0) return { state: 'not-checked', text: 'as drawn', checkers: [] };
  const found = own ? [own] : names.map((n) => lookup(n));
  if (found.some((c) => c?.state === 'void')) {
    return { state: 'void', text: 'CHECK VOID', checkers: [] };
  }
  if (found.length && found.every((c) => c?.state === 'current')) {
    const checkers = [...new Set(found.map((c) => c!.checker))];
    return { state: 'checked', text: `checked by ${checkers.join(GLUE)}`, checkers };
  }
  return none;
}

function groupCheck(rows: ShopSheetRow[]): ShopSheetGroup['check'] {
  const n = rows.length;
  const checked = rows.filter((r) => r.check.state === 'checked');
  const voided = rows.filter((r) => r.check.state === 'void').length;
  const checkers = [...new Set(checked.flatMap((r) => r.check.checkers))];
  if (n > 0 && checked.length === n) {
    return { state: 'checked', text: `Checked by ${checkers.join(GLUE)}`, checkers };
  }
  if (voided) {
    return {
      state: 'void',
      text: `CHECK VOID on ${voided} of ${n} positions — NOT CHECKED`,
      checkers,
    };
  }
  return {
    state: 'not-checked',
    text: checked.length
      ? `NOT CHECKED (${checked.length} of ${n} positions checked)`
      : 'NOT CHECKED',
    checkers,
  };
}

/**
 * Builds the shop sheet of a model: per part, or per stack once with its parts, the ordinate
 * table from the datum in both units, the drills with their spindle speeds, the title block's
 * facts and the cautions. Checks and corrections come from `reviews` (default: none).
 */
export function buildShopSheet(input: ShopSheetInput, reviews: ShopSheetReviews = {}): ShopSheet {
  const units = input.model.units;
  const evaluated = input.features;
  const featureById = new Map(evaluated.features.map((f) => [f.id, f]));

  const groups: ShopSheetGroup[] = evaluated.groups.map((g) => {
    const parts = g.parts.map((id) => evaluated.parts.find((p) => p.id === id)!);
    const rows: ShopSheetRow[] = g.rows.map((row) => {
      const f = featureById.get(row.feature)!;
      const wc = [row.x.worstCase, row.y.worstCase].filter((v): v is number => v !== null);
      const tol = wc.length ? Math.max(...wc) : null;
      return {
        feature: f.id,
        part: f.part,
        label: row.label,
        kind: f.kind,
        x: lengthCell(row.x, units),
        y: lengthCell(row.y, units),
        size: sizeText(f, units),
        tapDrill: tapDrillText(f),
        clearance: clearanceText(f),
        drill: drillText(f),
        rpm: f.speed ? Math.round(f.speed.rpm) : null,
        depth: depthText(f.depth, units),
        tolerance: tol === null ? '—' : toleranceText(tol, units),
        toleranceValue: tol,
        provenance: provenanceText(row.x, row.y),
        check: checkOfRow(f, row, reviews.checkOf),
        warnings: f.warnings.map((w) => w.message),
        errors: f.errors.map((e) => e.message),
      };
    });

    // Drills and speeds: one line per drill and material.
    const drills = new Map<string, ShopSheetDrill>();
    for (const row of g.rows) {
      const f = featureById.get(row.feature)!;
      if (!f.drill || !f.speed) continue;
      const key = `${f.drill.label}|${f.speed.material}`;
      const seen = drills.get(key);
      if (seen) seen.holes += 1;
      else {
        drills.set(key, {
          drill: f.drill.label,
          mm: f.drill.mm,
          inch: f.drill.inch,
          material: f.speed.material,
          vcMPerMin: f.speed.vcMPerMin,
          rpm: Math.round(f.speed.rpm),
          holes: 1,
          source: f.speed.source,
        });
      }
    }

    const pressureFeatures = g.pressureFeatures.map((id) => {
      const f = featureById.get(id)!;
      const names = [...new Set(f.warnings.flatMap((w) => w.names ?? []))];
      const kindOf = new Map(input.model.dimensions.map((d) => [d.name, d.kind]));
      return {
        label: f.label,
        restsOn: names.length
          ? names.map((n) => `${n} (${kindOf.get(n)})`).join(GLUE)
          : 'a figure typed on the feature',
      };
    });
    const cautions = g.pressure
      ? [
          PRESSURE_CAUTION,
          pressureFeatures.length
            ? `For the inspector: ${pressureFeatures.length} ${pressureFeatures.length === 1 ? 'feature rests' : 'features rest'} on scaled or assumed values (listed below).`
            : 'For the inspector: no position of this part rests on a scaled or assumed value.',
        ]
      : [];

    const title =
      parts.length > 1
        ? `${parts.map((p) => p.name).join(' + ')} (stack ${g.stack})`
        : (parts[0]?.name ?? g.id);
    return {
      id: g.id,
      title,
      stack: g.stack,
      parts: parts.map((p) => ({
        id: p.id,
        name: p.name,
        material: p.materialName ?? p.material,
        quantity: p.quantity,
        pressure: p.pressure,
        drillSet: p.drillSet,
        notes: p.notes ?? null,
        width: p.width?.value ?? null,
        height: p.height?.value ?? null,
      })),
      pressure: g.pressure,
      check: groupCheck(rows),
      rows,
      drills: [...drills.values()].sort((a, b) => a.mm - b.mm),
      pressureFeatures,
      cautions,
    };
  });

  return {
    project: input.project,
    revision: input.revision,
    date: input.date,
    derivedBy: input.derivedBy,
    units,
    otherUnits: otherUnit(units),
    status: evaluated.status,
    order: evaluated.order,
    corrections: reviews.corrections ?? [],
    cautions: SHEET_CAUTIONS,
    groups,
  };
}

/** One CSV line per hole, columns `SHOP_SHEET_CSV_COLUMNS`, inches and millimetres both. */
export function shopSheetCsv(sheet: ShopSheet): string {
  const inch = sheet.units === 'in';
  const records = sheet.groups.flatMap((g) =>
    g.rows.map((r) => {
      const [xIn, xMm] = inch ? [r.x.text, r.x.otherText] : [r.x.otherText, r.x.text];
      const [yIn, yMm] = inch ? [r.y.text, r.y.otherText] : [r.y.otherText, r.y.text];
      const blank = (s: string) => (s === '—' ? '' : s);
      return {
        group: g.id,
        part: r.part,
        feature: r.feature,
        label: r.label,
        kind: r.kind,
        x_in: blank(xIn),
        y_in: blank(yIn),
        x_mm: blank(xMm),
        y_mm: blank(yMm),
        size: r.size,
        tap_drill: r.tapDrill,
        clearance: r.clearance,
        drill: r.drill,
        rpm: r.rpm ?? '',
        depth: r.depth,
        tolerance: r.tolerance === '—' ? '' : r.tolerance,
        provenance: r.provenance,
        check: r.check.text,
        warnings: [...r.errors, ...r.warnings].join(' | '),
      };
    }),
  );
  return toCsv(records, SHOP_SHEET_CSV_COLUMNS);
}

/**
 * `reviews` are judged against the revision whose positions the sheet shows (passed in), so a
 * save between two reads cannot pair one revision's checks with another's positions. `solver`
 * evaluates the features (default: the process's pool), once per revision while it is cached.
 */
export function createShopSheetService(
  models: ModelService,
  options: {
    reviews?: (projectId: string, stored: CurrentModel) => Promise<ShopSheetReviews>;
    solver?: SolvePool;
  } = {},
) {
  const solver = options.solver ?? defaultSolvePool();
  async function sheet(project: ProjectRow): Promise<ShopSheet> {
    const stored = await models.current(project.id);
    // The features stored with the revision's solve; a revision saved before they were stored
    // is evaluated once on the pool (and remembered there).
    const [features, reviews] = await Promise.all([
      stored.features ?? solver.features(stored.model),
      options.reviews ? options.reviews(project.id, stored) : {},
    ]);
    return buildShopSheet(
      {
        project: { id: project.id, name: project.name, modelScale: project.modelScale ?? null },
        revision: stored.revision,
        date: stored.updatedAt,
        derivedBy: stored.updatedBy,
        model: stored.model,
        features,
      },
      reviews,
    );
  }

  return {
    sheet,
    render: (s: ShopSheet, paper: PaperSize): Promise<Buffer> => renderShopSheetPdf(s, paper),
    toCsv: shopSheetCsv,
  };
}

export type ShopSheetService = ReturnType<typeof createShopSheetService>;

/** A file name from the project's name and revision: `Kestrel-5-in-gauge-r3-shop-sheet.pdf`. */
export function shopSheetFileName(sheet: ShopSheet, ext: 'pdf' | 'csv'): string {
  const stem =
    sheet.project.name
      .replace(/[^\w.-]+/g, '-')
      .replace(/^-+|-+$/g, '')
      .slice(0, 60) || 'project';
  return `${stem}-r${sheet.revision}-shop-sheet.${ext}`;
}
