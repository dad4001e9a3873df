// The editing rules of parts and features, as plain functions over plain data: what a form's
// fields must hold, how a form becomes a model entry, and how an entry goes into the model. The
// parts store enforces them on every edit; the forms call the same functions to show the
// problems as they are typed.
import {
  drillByLabel,
  ExpressionError,
  expressionNames,
  threadByDesignation,
  type FairsheetModelInput,
} from '@shared/engine';

export type Part = NonNullable<FairsheetModelInput['parts']>[number];
export type Feature = NonNullable<FairsheetModelInput['features']>[number];
export type DrillSet = 'metric' | 'numberLetter' | 'fractional';

/** An id or a stack name: a letter or _ then letters, digits or _. */
const IDENT = /^[A-Za-z_][A-Za-z0-9_]*$/;

/** What the rules need to know of the model around the entry being edited. */
export interface EditContext {
  /** The dimension names an expression may use. */
  names: ReadonlySet<string>;
  /** Ids already taken by entries of the same kind. */
  takenIds: readonly string[];
  /** The id of the entry being edited (it may keep it); undefined for a new one. */
  ownId?: string;
}

/**
 * '' when the expression reads and every name in it is a dimension; otherwise what is wrong and
 * where. An empty field is a problem only when the field is required.
 *
 * @example expressionProblem('a + b', new Set(['a']), true) // 'No dimension named b'
 */
export function expressionProblem(
  text: string,
  names: ReadonlySet<string>,
  required: boolean,
): string {
  if (!text.trim()) return required ? 'Give a figure or an expression' : '';
  try {
    const unknown = expressionNames(text).filter((n) => !names.has(n));
    return unknown.length ? `No dimension named ${unknown.join(', ')}` : '';
  } catch (e) {
    if (e instanceof ExpressionError) return `${e.message} (character ${(e.at ?? 0) + 1})`;
    throw e;
  }
}

function idProblem(id: string, ctx: EditContext, other: string): string {
  if (!IDENT.test(id)) return 'A letter or _ then letters, digits or _';
  return ctx.takenIds.includes(id) && id !== ctx.ownId ? `Another ${other} has this id` : '';
}

/** The first problem of a set, or '' when there is none. */
export const firstProblem = (problems: Record<string, string>): string =>
  Object.values(problems).find((p) => p) ?? '';

// ---------------------------------------------------------------------------------------------
// Parts

/** A part as its form holds it: every figure as typed. */
export interface PartDraft {
  id: string;
  name: string;
  material: string;
  quantity: number;
  stack: string;
  pressure: boolean;
  drillSet: DrillSet;
  width: string;
  height: string;
  notes: string;
}

/** The form of a part: blank for a new one. */
export function partDraft(p: Part | null): PartDraft {
  return {
    id: p?.id ?? '',
    name: p?.name ?? '',
    material: p?.material ?? 'mild-steel',
    quantity: p?.quantity ?? 1,
    stack: p?.stack ?? '',
    pressure: p?.pressure ?? false,
    drillSet: p?.drillSet ?? 'metric',
    width: p?.width === undefined ? '' : String(p.width),
    height: p?.height === undefined ? '' : String(p.height),
    notes: p?.notes ?? '',
  };
}

/** What is wrong with each field of a part's form ('' where nothing is). */
export function partProblems(d: PartDraft, ctx: EditContext) {
  return {
    id: idProblem(d.id, ctx, 'part'),
    name: d.name.trim() ? '' : 'Give the part a name',
    stack: d.stack && !IDENT.test(d.stack) ? 'A stack id is a plain name, e.g. frames' : '',
    width: expressionProblem(d.width, ctx.names, false),
    height: expressionProblem(d.height, ctx.names, false),
  };
}

/** The model entry of a part's form: text trimmed, empty optional fields left out. */
export function partFromDraft(d: PartDraft): Part {
  return {
    id: d.id,
    name: d.name.trim(),
    material: d.material,
    quantity: d.quantity,
    ...(d.stack && { stack: d.stack }),
    pressure: d.pressure,
    drillSet: d.drillSet,
    ...(d.width.trim() && { width: d.width.trim() }),
    ...(d.height.trim() && { height: d.height.trim() }),
    ...(d.notes.trim() && { notes: d.notes.trim() }),
  };
}

/** Puts a part into the model, in the place of `previousId` (or its own id) if it is there. */
export function putPart(m: FairsheetModelInput, part: Part, previousId?: string) {
  m.parts ??= [];
  const at = m.parts.findIndex((x) => x.id === (previousId ?? part.id));
  if (at >= 0) m.parts[at] = part;
  else m.parts.push(part);
}

/** Takes a part out of the model, and its features with it. */
export function dropPart(m: FairsheetModelInput, id: string) {
  m.parts = (m.parts ?? []).filter((x) => x.id !== id);
  m.features = (m.features ?? []).filter((f) => f.part !== id);
}

// ---------------------------------------------------------------------------------------------
// Features

/** A feature as its form holds it: every figure as typed. */
export interface FeatureDraft {
  id: string;
  label: string;
  kind: Feature['kind'];
  x: string;
  y: string;
  thread: string;
  clearance: 'close' | 'free';
  percentThread: number;
  drill: string;
  through: boolean;
  depth: string;
  width: string;
  length: string;
  pattern: 'none' | 'circle' | 'row';
  count: number;
  size: string;
  angle: number;
  note: string;
}

/** The first free id of the form f1, f2, …, counting on from the number of features. */
export function nextFeatureId(takenIds: readonly string[]): string {
  let n = takenIds.length + 1;
  while (takenIds.includes(`f${n}`)) n += 1;
  return `f${n}`;
}

/** The form of a feature: for a new one, a single through hole with the next free id. */
export function featureDraft(f: Feature | null, takenIds: readonly string[]): FeatureDraft {
  const blank: FeatureDraft = {
    id: '',
    label: '',
    kind: 'hole',
    x: '',
    y: '',
    thread: '',
    clearance: 'free',
    percentThread: 75,
    drill: '',
    through: true,
    depth: '',
    width: '',
    length: '',
    pattern: 'none',
    count: 4,
    size: '',
    angle: 0,
    note: '',
  };
  if (!f) return { ...blank, id: nextFeatureId(takenIds) };
  return {
    id: f.id,
    label: f.label ?? '',
    kind: f.kind,
    x: String(f.x),
    y: String(f.y),
    thread: f.thread ?? '',
    clearance: f.clearance ?? 'free',
    percentThread: f.percentThread ?? 75,
    drill: f.drill ?? '',
    through: f.depth === undefined || f.depth === 'through',
    depth: f.depth === undefined || f.depth === 'through' ? '' : String(f.depth),
    width: f.width === undefined ? '' : String(f.width),
    length: f.length === undefined ? '' : String(f.length),
    pattern: f.pattern?.type ?? 'none',
    count: f.pattern?.count ?? 4,
    size: f.pattern ? String(f.pattern.type === 'circle' ? f.pattern.pcd : f.pattern.pitch) : '',
    angle: f.pattern
      ? ((f.pattern.type === 'circle' ? f.pattern.startDeg : f.pattern.angleDeg) ?? 0)
      : 0,
    note: f.note ?? '',
  };
}

/** Why the thread cannot be used ('' when it can, or when none is needed). */
export function threadProblem(d: Pick<FeatureDraft, 'thread' | 'kind'>): string {
  if (!d.thread.trim()) return d.kind === 'tapped' ? 'A tapped hole needs a thread' : '';
  try {
    threadByDesignation(d.thread);
    return '';
  } catch (e) {
    return (e as Error).message;
  }
}

const sized = (kind: Feature['kind']) => kind === 'slot' || kind === 'pocket';

/** What is wrong with each field of a feature's form ('' where nothing is). */
export function featureProblems(d: FeatureDraft, ctx: EditContext) {
  const expr = (text: string) => expressionProblem(text, ctx.names, true);
  return {
    id: idProblem(d.id, ctx, 'feature'),
    x: expr(d.x),
    y: expr(d.y),
    depth: d.through ? '' : expr(d.depth),
    width: sized(d.kind) ? expr(d.width) : '',
    length: sized(d.kind) ? expr(d.length) : '',
    size: d.pattern === 'none' ? '' : expr(d.size),
    thread: threadProblem(d),
    drill:
      d.drill.trim() && !drillByLabel(d.drill) && !/^\d/.test(d.drill.trim())
        ? 'Write a drill as #29, F, 7/64" or 3.3 mm'
        : '',
  };
}

/** The model entry of a feature's form on a part: only the fields its kind and pattern use. */
export function featureFromDraft(d: FeatureDraft, part: string): Feature {
  const text = (s: string) => s.trim();
  return {
    id: d.id,
    part,
    kind: d.kind,
    x: text(d.x),
    y: text(d.y),
    ...(text(d.label) && { label: text(d.label) }),
    ...(text(d.thread) && { thread: text(d.thread) }),
    ...(text(d.thread) && d.kind === 'hole' && { clearance: d.clearance }),
    ...(d.kind === 'tapped' && d.percentThread !== 75 && { percentThread: d.percentThread }),
    ...(text(d.drill) && { drill: text(d.drill) }),
    depth: d.through ? 'through' : text(d.depth),
    ...(sized(d.kind) && { width: text(d.width), length: text(d.length) }),
    ...(d.pattern === 'circle' && {
      pattern: { type: 'circle', count: d.count, pcd: text(d.size), startDeg: d.angle },
    }),
    ...(d.pattern === 'row' && {
      pattern: { type: 'row', count: d.count, pitch: text(d.size), angleDeg: d.angle },
    }),
    ...(text(d.note) && { note: text(d.note) }),
  };
}

/** Puts a feature into the model, in the place of `previousId` (or its own id) if it is there. */
export function putFeature(m: FairsheetModelInput, feature: Feature, previousId?: string) {
  m.features ??= [];
  const at = m.features.findIndex((x) => x.id === (previousId ?? feature.id));
  if (at >= 0) m.features[at] = feature;
  else m.features.push(feature);
}

/** Takes a feature out of the model. */
export function dropFeature(m: FairsheetModelInput, id: string) {
  m.features = (m.features ?? []).filter((f) => f.id !== id);
}
