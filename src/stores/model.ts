import { defineStore } from 'pinia';
import { computed, ref, shallowRef, toRaw } from 'vue';
import {
  applyDiff,
  diffModels,
  solveModel,
  type FairsheetModelInput,
  type ModelDiff,
  type SolveResult,
} from '@shared/engine';
import { ApiError } from '@/api/client';
import { modelsApi } from '@/api/models';
import { useSessionStore } from './session';

type Dimension = FairsheetModelInput['dimensions'][number];
type Relation = NonNullable<FairsheetModelInput['relations']>[number];

export interface SaveConflict {
  currentRevision: number;
  theirs: FairsheetModelInput;
  /** What the other save changed, against the revision this edit started from. */
  theirChanges: ModelDiff;
  /** What this browser changed. */
  myChanges: ModelDiff;
}

const liveSolveDelayMs = 60;
const undoDepth = 200;

const clone = <T>(value: T): T => JSON.parse(JSON.stringify(value)) as T;

/** Renames a dimension inside a relation, whole identifiers only (not inside longer names). */
export function renameInExpression(expr: string, from: string, to: string): string {
  const escaped = from.replace(/\./g, '\\.');
  return expr.replace(new RegExp(`(?<![\\w.])${escaped}(?![\\w(.])`, 'g'), to);
}

/**
 * The project's model as the builder edits it: a working copy, solved live in the browser
 * with the shared engine, saved to the server against the revision it was loaded at.
 */
export const useModelStore = defineStore('model', () => {
  const projectId = ref('');
  const revision = ref(0);
  const base = shallowRef<FairsheetModelInput | null>(null);
  const model = ref<FairsheetModelInput>({
    format: 'fairsheet.model',
    version: 1,
    units: 'in',
    dimensions: [],
    relations: [],
  });
  const result = shallowRef<SolveResult | null>(null);
  const lastSolveMs = ref(0);
  const selected = ref<string | null>(null);
  const edits = ref(0);
  const updatedBy = ref<string | null>(null);
  const saving = ref(false);
  const loading = ref(false);
  const conflict = shallowRef<SaveConflict | null>(null);
  const undoStack: string[] = [];
  const redoStack: string[] = [];
  const canUndo = ref(false);
  const canRedo = ref(false);
  let timer: ReturnType<typeof setTimeout> | undefined;

  const dirty = computed(() => edits.value > 0);
  const dimensionNames = computed(() => model.value.dimensions.map((d) => d.name));

  function solveNow() {
    clearTimeout(timer);
    const start = performance.now();
    // The raw object: going through Vue's reactive proxies would cost more than the solve.
    result.value = solveModel(toRaw(model.value), { timeLimitMs: 500 });
    lastSolveMs.value = performance.now() - start;
  }

  function scheduleSolve() {
    clearTimeout(timer);
    timer = setTimeout(solveNow, liveSolveDelayMs);
  }

  async function load(id: string) {
    loading.value = true;
    try {
      const stored = await modelsApi.get(id);
      projectId.value = id;
      revision.value = stored.revision;
      base.value = stored.model;
      model.value = clone(stored.model);
      updatedBy.value = stored.updatedBy;
      edits.value = 0;
      conflict.value = null;
      undoStack.length = 0;
      redoStack.length = 0;
      canUndo.value = canRedo.value = false;
      solveNow();
    } finally {
      loading.value = false;
    }
  }

  /** Every change goes through here: one undo step, then a live re-solve. */
  function edit(change: (m: FairsheetModelInput) => void) {
    undoStack.push(JSON.stringify(model.value));
    if (undoStack.length > undoDepth) undoStack.shift();
    redoStack.length = 0;
    change(model.value);
    edits.value += 1;
    canUndo.value = true;
    canRedo.value = false;
    scheduleSolve();
  }

  function step(from: string[], to: string[]) {
    const snapshot = from.pop();
    if (!snapshot) return;
    to.push(JSON.stringify(model.value));
    model.value = JSON.parse(snapshot);
    edits.value += 1;
    canUndo.value = undoStack.length > 0;
    canRedo.value = redoStack.length > 0;
    scheduleSolve();
  }
  const undo = () => step(undoStack, redoStack);
  const redo = () => step(redoStack, undoStack);

  function upsertDimension(dimension: Dimension, previousName?: string) {
    edit((m) => {
      const key = previousName ?? dimension.name;
      const at = m.dimensions.findIndex((d) => d.name === key);
      if (at >= 0) m.dimensions[at] = dimension;
      else m.dimensions.push(dimension);
      if (previousName && previousName !== dimension.name) {
        for (const r of m.relations ?? [])
          r.expr = renameInExpression(r.expr, previousName, dimension.name);
        if (selected.value === previousName) selected.value = dimension.name;
      }
    });
  }

  function removeDimension(name: string) {
    edit((m) => {
      m.dimensions = m.dimensions.filter((d) => d.name !== name);
    });
    if (selected.value === name) selected.value = null;
  }

  function upsertRelation(relation: Relation) {
    edit((m) => {
      m.relations ??= [];
      const at = m.relations.findIndex((r) => r.id === relation.id);
      if (at >= 0) m.relations[at] = relation;
      else m.relations.push(relation);
    });
  }

  function removeRelation(id: string) {
    edit((m) => {
      m.relations = (m.relations ?? []).filter((r) => r.id !== id);
    });
  }

  /** A relation id not yet used: r1, r2, … */
  function nextRelationId(): string {
    const used = new Set((model.value.relations ?? []).map((r) => r.id));
    let n = used.size + 1;
    while (used.has(`r${n}`)) n += 1;
    return `r${n}`;
  }

  /** Replaces the whole working model (import); one undo step. */
  function replace(next: FairsheetModelInput) {
    edit((m) => {
      Object.assign(m, clone(next));
    });
  }

  async function save(note?: string) {
    if (saving.value) return;
    saving.value = true;
    const sent = clone(model.value);
    const editsAtSend = edits.value;
    try {
      const answer = await modelsApi.save(projectId.value, revision.value, sent, note);
      revision.value = answer.revision;
      base.value = sent;
      updatedBy.value = useSessionStore().user?.name ?? updatedBy.value;
      // Edits typed while the save was in flight stay unsaved.
      edits.value -= editsAtSend;
      conflict.value = null;
    } catch (err) {
      if (err instanceof ApiError && err.code === 'conflict') {
        const details = err.details as { currentRevision: number; model: FairsheetModelInput };
        conflict.value = {
          currentRevision: details.currentRevision,
          theirs: details.model,
          theirChanges: diffModels(base.value ?? sent, details.model),
          myChanges: diffModels(base.value ?? sent, sent),
        };
      }
      throw err;
    } finally {
      saving.value = false;
    }
  }

  /** After a 409: drop this browser's edits and take the newer save. */
  function takeTheirs() {
    const c = conflict.value;
    if (!c) return;
    revision.value = c.currentRevision;
    base.value = c.theirs;
    model.value = clone(c.theirs);
    edits.value = 0;
    conflict.value = null;
    solveNow();
  }

  /** After a 409: replay this browser's edits on the newer save, ready to save again. */
  function reapplyMine() {
    const c = conflict.value;
    if (!c) return;
    revision.value = c.currentRevision;
    base.value = c.theirs;
    model.value = clone(applyDiff(c.theirs, c.myChanges));
    edits.value = 1;
    conflict.value = null;
    solveNow();
  }

  return {
    projectId,
    revision,
    model,
    result,
    lastSolveMs,
    selected,
    updatedBy,
    edits,
    dirty,
    saving,
    loading,
    conflict,
    canUndo,
    canRedo,
    dimensionNames,
    load,
    edit,
    undo,
    redo,
    solveNow,
    upsertDimension,
    removeDimension,
    upsertRelation,
    removeRelation,
    nextRelationId,
    replace,
    save,
    takeTheirs,
    reapplyMine,
  };
});
