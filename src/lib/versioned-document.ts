/**
 * One way to edit a document the server keeps by revision (the model, a sheet): a working copy,
 * undo by edit, a save queue and a merge when someone else saved first. Pure TypeScript: the
 * store owns the reactive working copy and hands this mechanism a way to read and replace it.
 *
 * - Undo steps are whole edits (a dragged pin, a typed figure), never keystrokes: an edit may
 *   name a group, and consecutive edits of one group are one step. A step holds the text of the
 *   document before and after; when the working copy has moved on since (a merge, a server
 *   operation), the step is replayed as a diff instead, so undoing never drops others' work.
 * - One save in flight at a time; saves asked for meanwhile wait and go as one, sending the
 *   working copy as it is then.
 * - A 409 answers the document as the server has it: the changes on each side are diffed
 *   against the revision both started from (shared/engine/diff.ts). Where nothing clashes, a
 *   document that merges takes theirs and replays mine on it; otherwise it asks.
 */
import { sameJson, type ItemChange } from '@shared/engine';

/** How one kind of document is written down, compared and replayed. */
export interface DocumentKind<T, D> {
  /** The versioned part of the document as text (what a save sends, what undo restores). */
  snapshot(doc: T): string;
  restore(text: string): T;
  diff(before: T, after: T): D;
  /** `doc` with `changes` replayed on it (a new document; `doc` is left as it was). */
  apply(doc: T, changes: D): T;
  isEmpty(changes: D): boolean;
}

export type SaveState = 'saved' | 'unsaved' | 'saving' | 'failed';

export interface DocumentConflict<T, D> {
  currentRevision: number;
  theirs: T;
  /** What the other save changed, against the revision this copy started from. */
  theirChanges: D;
  /** What this browser changed. */
  myChanges: D;
  /** Items (and fields) changed both ways to different ends, e.g. `pins p3`, `calibration`. */
  clashes: string[];
}

export interface DocumentState<T, D> {
  revision: number;
  canUndo: boolean;
  canRedo: boolean;
  /** Edits since the last save (an undo counts as one). */
  unsaved: number;
  saveState: SaveState;
  error: unknown;
  conflict: DocumentConflict<T, D> | null;
}

export interface VersionedDocumentOptions<T, D> {
  kind: DocumentKind<T, D>;
  /** The working copy, as the store holds it; edits change it in place. */
  read: () => T;
  /** Replaces the working copy (undo, a merge, a load). */
  write: (doc: T) => void;
  /** Sends the document based on `revision`; answers the revision written. */
  save: (doc: T, revision: number) => Promise<{ revision: number }>;
  /** The server's document and revision when `err` is its 409, else null. */
  conflictOf: (err: unknown) => { revision: number; theirs: T } | null;
  /** On a 409: 'ask' always leaves the choice to the builder; 'merge' asks only on a clash. */
  onConflict: 'ask' | 'merge';
  /** Save this long after the last edit (none: saves only when asked). */
  autosaveMs?: number;
  undoDepth?: number;
  onState?: (state: DocumentState<T, D>) => void;
  /** The working copy changed (an edit, undo, redo, merge, load). */
  onChange?: () => void;
  /** A 409 was merged without asking: both sides' changes are in the working copy. */
  onMerged?: (conflict: DocumentConflict<T, D>) => void;
}

interface UndoStep {
  before: string;
  after: string;
  group?: string;
}

/** True when two item changes to one item end differently (field by field when both edit it). */
function itemsClash(a: ItemChange<unknown>, b: ItemChange<unknown>): boolean {
  if (a.change === 'changed' && b.change === 'changed') {
    const mine = new Map(b.fields.map((f) => [f.field, f.to]));
    return a.fields.some((f) => mine.has(f.field) && !sameJson(mine.get(f.field), f.to));
  }
  return !sameJson(a.after, b.after);
}

/**
 * What both sides changed to different ends, for diffs shaped as the engine's ModelDiff: lists
 * of item changes by field name (`dimensions`, `pins`), and single fields as `{ from, to }`.
 *
 * @example clashesOf({ pins: [p3MovedLeft] }, { pins: [p3MovedRight] }) // ['pins p3']
 */
export function clashesOf(theirs: object, mine: object): string[] {
  const out: string[] = [];
  const m = mine as Record<string, unknown>;
  for (const [field, t] of Object.entries(theirs as Record<string, unknown>)) {
    const o = m[field];
    if (t === undefined || o === undefined) continue;
    if (Array.isArray(t) && Array.isArray(o)) {
      const byKey = new Map((o as ItemChange<unknown>[]).map((c) => [c.key, c]));
      for (const c of t as ItemChange<unknown>[]) {
        const other = byKey.get(c.key);
        if (other && itemsClash(c, other)) out.push(`${field} ${c.key}`);
      }
    } else if (!sameJson((t as { to?: unknown }).to, (o as { to?: unknown }).to)) {
      out.push(field);
    }
  }
  return out;
}

export type VersionedDocument<T, D> = ReturnType<typeof createVersionedDocument<T, D>>;

/**
 * A document's edit, undo, save and merge, over a working copy the caller keeps.
 *
 * @example
 * const doc = createVersionedDocument({ kind, read: () => copy, write: (d) => (copy = d), save, conflictOf, onConflict: 'merge' });
 * doc.load(3, stored); doc.edit((d) => d.pins.push(pin)); await doc.save();
 */
export function createVersionedDocument<T, D>(options: VersionedDocumentOptions<T, D>) {
  const { kind } = options;
  const undoDepth = options.undoDepth ?? 200;
  let base = '';
  let revision = 0;
  let unsaved = 0;
  let saveState: SaveState = 'saved';
  let error: unknown = null;
  let conflict: DocumentConflict<T, D> | null = null;
  let undoStack: UndoStep[] = [];
  let redoStack: UndoStep[] = [];
  /** Whether the next edit of the top step's group may join it (no undo or load since). */
  let groupOpen = false;
  let timer: ReturnType<typeof setTimeout> | undefined;
  let inFlight: Promise<void> | null = null;
  let queued: Promise<void> | null = null;

  function state(): DocumentState<T, D> {
    return {
      revision,
      canUndo: undoStack.length > 0,
      canRedo: redoStack.length > 0,
      unsaved,
      saveState,
      error,
      conflict,
    };
  }

  function changed(working = true) {
    options.onState?.(state());
    if (working) options.onChange?.();
  }

  function touched() {
    unsaved += 1;
    if (saveState !== 'saving') saveState = 'unsaved';
    schedule();
  }

  function schedule() {
    if (options.autosaveMs === undefined) return;
    clearTimeout(timer);
    timer = setTimeout(() => void save().catch(() => {}), options.autosaveMs);
  }

  /** Starts over from the server's document at `rev`: no edits, no history. */
  function load(rev: number, doc: T) {
    clearTimeout(timer);
    base = kind.snapshot(doc);
    revision = rev;
    options.write(kind.restore(base));
    undoStack = [];
    redoStack = [];
    groupOpen = false;
    unsaved = 0;
    saveState = 'saved';
    error = null;
    conflict = null;
    changed();
  }

  /**
   * Every change goes through here: one undo step (or part of the last one, when `group` is
   * the same as its group), then an autosave if the document has one. A change that changes
   * nothing makes no step.
   */
  function edit(change: (doc: T) => void, group?: string) {
    const working = options.read();
    const top = undoStack.at(-1);
    let before = kind.snapshot(working);
    // One copy of the text shared by two steps, when nothing moved the copy in between.
    if (top?.after === before) before = top.after;
    change(working);
    const after = kind.snapshot(working);
    if (after === before) return;
    if (group !== undefined && groupOpen && top?.group === group && top.after === before) {
      top.after = after;
    } else {
      undoStack.push({ before, after, group });
      if (undoStack.length > undoDepth) undoStack.shift();
    }
    groupOpen = group !== undefined;
    redoStack = [];
    touched();
    changed();
  }

  /** Puts the working copy at `to` from `from`, exactly when nothing else moved it since. */
  function stepTo(from: string, to: string) {
    const now = kind.snapshot(options.read());
    if (now === from) options.write(kind.restore(to));
    else
      options.write(kind.apply(kind.restore(now), kind.diff(kind.restore(from), kind.restore(to))));
  }

  function undo() {
    const step = undoStack.pop();
    if (!step) return;
    stepTo(step.after, step.before);
    redoStack.push(step);
    groupOpen = false;
    touched();
    changed();
  }

  function redo() {
    const step = redoStack.pop();
    if (!step) return;
    stepTo(step.before, step.after);
    undoStack.push(step);
    groupOpen = false;
    touched();
    changed();
  }

  /**
   * Meets the server's newer document (a 409's answer): merges when this document merges and
   * nothing clashes (answers true), else leaves the choice in `conflict` (answers false).
   */
  function met(theirRevision: number, theirs: T): boolean {
    const from = kind.restore(base);
    const myChanges = kind.diff(from, kind.restore(kind.snapshot(options.read())));
    const theirChanges = kind.diff(from, theirs);
    const clashes = clashesOf(theirChanges as object, myChanges as object);
    conflict = { currentRevision: theirRevision, theirs, theirChanges, myChanges, clashes };
    if (options.onConflict === 'merge' && clashes.length === 0) {
      const merged = conflict;
      keepMine();
      options.onMerged?.(merged);
      return true;
    }
    saveState = 'unsaved';
    changed(false);
    return false;
  }

  async function send(): Promise<void> {
    const sent = kind.snapshot(options.read());
    const sentEdits = unsaved;
    saveState = 'saving';
    changed(false);
    try {
      const answer = await options.save(kind.restore(sent), revision);
      revision = answer.revision;
      base = sent;
      // Edits made while the save was in flight stay unsaved.
      unsaved = Math.max(0, unsaved - sentEdits);
      saveState = unsaved > 0 ? 'unsaved' : 'saved';
      error = null;
      changed(false);
      if (unsaved > 0) schedule();
    } catch (err) {
      const theirs = options.conflictOf(err);
      if (theirs && met(theirs.revision, theirs.theirs)) {
        // Merged: theirs is the base now, mine replayed on it; send that straight away.
        if (unsaved > 0) return send();
        return;
      }
      if (!theirs) {
        saveState = 'failed';
        error = err;
        changed(false);
      }
      throw err;
    }
  }

  /**
   * Saves the working copy (if anything is unsaved). While a save is in flight, later calls
   * share one follow-up save, which sends the working copy as it is when the first returns.
   * Rejects with the save's error (a 409 that was not merged included).
   */
  function save(): Promise<void> {
    clearTimeout(timer);
    if (inFlight) {
      queued ??= inFlight
        .catch(() => {})
        .then(() => {
          queued = null;
          return save();
        });
      return queued;
    }
    if (unsaved === 0 || conflict) return Promise.resolve();
    inFlight = send().finally(() => {
      inFlight = null;
    });
    return inFlight;
  }

  /** After a 409: replay this browser's edits on the newer save, ready to save again. */
  function keepMine() {
    const c = conflict;
    if (!c) return;
    const mine = kind.isEmpty(c.myChanges) ? null : c.myChanges;
    revision = c.currentRevision;
    base = kind.snapshot(c.theirs);
    options.write(mine ? kind.apply(c.theirs, mine) : kind.restore(base));
    unsaved = mine ? Math.max(unsaved, 1) : 0;
    saveState = unsaved > 0 ? 'unsaved' : 'saved';
    conflict = null;
    groupOpen = false;
    changed();
  }

  /** After a 409: drop this browser's edits and take the newer save. */
  function takeTheirs() {
    const c = conflict;
    if (!c) return;
    revision = c.currentRevision;
    base = kind.snapshot(c.theirs);
    options.write(kind.restore(base));
    unsaved = 0;
    saveState = 'saved';
    conflict = null;
    groupOpen = false;
    changed();
  }

  /**
   * Takes a document the server wrote at `rev` from this copy's own revision (an operation
   * such as a measurement): it becomes the base, and unsaved edits are replayed on it.
   * `undoable`: the change is one undo step here (undoing it is then an edit to save).
   */
  function adopt(rev: number, doc: T, { undoable = false } = {}) {
    const before = kind.snapshot(options.read());
    const mine = kind.diff(kind.restore(base), kind.restore(before));
    base = kind.snapshot(doc);
    revision = rev;
    options.write(kind.isEmpty(mine) ? kind.restore(base) : kind.apply(doc, mine));
    if (undoable) {
      undoStack.push({ before, after: kind.snapshot(options.read()) });
      if (undoStack.length > undoDepth) undoStack.shift();
      redoStack = [];
    }
    groupOpen = false;
    changed();
  }

  /** Saves now and waits for every queued save (the document is then saved, or has a conflict). */
  async function flush() {
    await save();
    while (inFlight || queued) await (queued ?? inFlight);
  }

  /** Stops a pending autosave (the document is being closed). */
  function dispose() {
    clearTimeout(timer);
  }

  return {
    load,
    edit,
    undo,
    redo,
    save,
    flush,
    keepMine,
    takeTheirs,
    adopt,
    meet: met,
    dispose,
    state,
    /** The revision the working copy is based on. */
    get revision() {
      return revision;
    },
    /** The server's document at that revision. */
    base: () => kind.restore(base),
  };
}
