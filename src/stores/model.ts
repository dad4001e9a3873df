import { defineStore } from 'pinia';
import { computed, ref, shallowRef, toRaw } from 'vue';
import {
  applyDiff,
  diffModels,
  isEmptyDiff,
  solveModel,
  type FairsheetModelInput,
  type ModelDiff,
  type SolveResult,
} from '@shared/engine';
import { putDimension } from '@shared/api';
import { ApiError } from '@/api/client';
import { modelsApi } from '@/api/models';
import {
  createVersionedDocument,
  type DocumentConflict,
  type DocumentKind,
} from '@/lib/versioned-document';
import { useSessionStore } from './session';

type Dimension = FairsheetModelInput['dimensions'][number];
type Relation = NonNullable<FairsheetModelInput['relations']>[number];

/** A save refused because someone else saved first: what each side changed. */
export type SaveConflict = DocumentConflict<FairsheetModelInput, ModelDiff>;

export { renameInExpression } from '@shared/api';

const liveSolveDelayMs = 60;
/** A live solve in the browser stops here, as the server's stop at theirs: the page stays alive. */
export const liveSolveTimeLimitMs = 500;

const clone = <T>(value: T): T => JSON.parse(JSON.stringify(value)) as T;

/** The model as a versioned document: dimensions by name, the rest by id (shared/engine/diff.ts). */
const modelDocument: DocumentKind<FairsheetModelInput, ModelDiff> = {
  // The raw object: going through Vue's reactive proxies would cost more than the text.
  snapshot: (m) => JSON.stringify(toRaw(m)),
  restore: (text) => JSON.parse(text) as FairsheetModelInput,
  diff: diffModels,
  apply: applyDiff,
  isEmpty: isEmptyDiff,
};

/**
 * The project's model as the builder edits it: a working copy, solved live in the browser
 * with the shared engine, saved to the server against the revision it was loaded at (the
 * versioned-document mechanism the sheets use too; a 409 asks which way to go).
 */
export const useModelStore = defineStore('model', () => {
  const projectId = ref('');
  const revision = ref(0);
  const model = ref<FairsheetModelInput>({
    format: 'fairsheet.model',
    version: 1,
    units: 'in',
    dimensions: [],
    relations: [],
  });
  const result = shallowRef<SolveResult | null>(null);
  const lastSolveMs = ref(0);
  /** Solves so far: a test waits on this to know a keystroke's solve has landed. */
  const solves = ref(0);
  const selected = ref<string | null>(null);
  const edits = ref(0);
  const updatedBy = ref<string | null>(null);
  const saving = ref(false);
  const loading = ref(false);
  const conflict = shallowRef<SaveConflict | null>(null);
  const canUndo = ref(false);
  const canRedo = ref(false);
  let timer: ReturnType<typeof setTimeout> | undefined;

  const dirty = computed(() => edits.value > 0);
  const dimensionNames = computed(() => model.value.dimensions.map((d) => d.name));

  /** The note of the save asked for last (the history shows it instead of the summary). */
  let pendingNote: string | undefined;
  const doc = createVersionedDocument<FairsheetModelInput, ModelDiff>({
    kind: modelDocument,
    read: () => model.value,
    write: (m) => {
      model.value = m;
    },
    save: (m, rev) => modelsApi.save(projectId.value, rev, m, pendingNote),
    conflictOf: (err) => {
      if (!(err instanceof ApiError) || err.code !== 'conflict') return null;
      const details = err.details as { currentRevision: number; model: FairsheetModelInput };
      return { revision: details.currentRevision, theirs: details.model };
    },
    // The model's changes are the builder's figures: a 409 always shows both sides.
    onConflict: 'ask',
    onState: (s) => {
      revision.value = s.revision;
      canUndo.value = s.canUndo;
      canRedo.value = s.canRedo;
      edits.value = s.unsaved;
      saving.value = s.saveState === 'saving';
      conflict.value = s.conflict;
    },
    onChange: () => scheduleSolve(),
  });

  function solveNow() {
    clearTimeout(timer);
    const start = performance.now();
    // The raw object: going through Vue's reactive proxies would cost more than the solve.
    result.value = solveModel(toRaw(model.value), { timeLimitMs: liveSolveTimeLimitMs });
    lastSolveMs.value = performance.now() - start;
    solves.value++;
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
      updatedBy.value = stored.updatedBy;
      doc.load(stored.revision, stored.model);
      solveNow();
    } finally {
      loading.value = false;
    }
  }

  /**
   * Every change goes through here: one undo step, then a live re-solve. Edits naming the same
   * `group` one after another (the fields of one form) are one undo step.
   */
  function edit(change: (m: FairsheetModelInput) => void, group?: string) {
    doc.edit(change, group);
  }

  const undo = () => doc.undo();
  const redo = () => doc.redo();

  function upsertDimension(dimension: Dimension, previousName?: string) {
    edit((m) => putDimension(m, dimension, previousName));
    if (previousName && previousName !== dimension.name && selected.value === previousName) {
      selected.value = dimension.name;
    }
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

  /**
   * Saves the working copy; while a save is in flight, this one waits and goes with whatever
   * was edited meanwhile. A 409 opens the choice (`conflict`) and rejects.
   */
  async function save(note?: string) {
    pendingNote = note;
    try {
      await doc.save();
      updatedBy.value = useSessionStore().user?.name ?? updatedBy.value;
    } finally {
      if (pendingNote === note) pendingNote = undefined;
    }
  }

  /** After a 409: drop this browser's edits and take the newer save. */
  function takeTheirs() {
    doc.takeTheirs();
    solveNow();
  }

  /** After a 409: replay this browser's edits on the newer save, ready to save again. */
  function reapplyMine() {
    doc.keepMine();
    solveNow();
  }

  /**
   * Takes a revision the server wrote from this copy's revision (a measurement on a sheet):
   * unsaved edits are replayed on it, and it is one undo step.
   */
  function adopt(rev: number, next: FairsheetModelInput) {
    doc.adopt(rev, next, { undoable: true });
    updatedBy.value = useSessionStore().user?.name ?? updatedBy.value;
  }

  /**
   * Meets a newer revision someone else saved (a measurement's 409): taken in at once when
   * this browser has changed nothing, else the choice is left in `conflict` (answers false).
   */
  function meet(rev: number, theirs: FairsheetModelInput): boolean {
    if (isEmptyDiff(diffModels(doc.base(), toRaw(model.value)))) {
      doc.adopt(rev, theirs);
      solveNow();
      return true;
    }
    doc.meet(rev, theirs);
    return false;
  }

  /** The server's model at the revision the working copy is based on. */
  const stored = () => doc.base();

  return {
    projectId,
    revision,
    model,
    result,
    lastSolveMs,
    solves,
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
    adopt,
    meet,
    stored,
  };
});
