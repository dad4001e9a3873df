import { describe, expect, it, vi } from 'vitest';
import type { Pin } from '@shared/api';
import { sheetDocument, type SheetChanges, type SheetEdits } from '@/lib/sheet-document';
import {
  clashesOf,
  createVersionedDocument,
  type VersionedDocumentOptions,
} from '@/lib/versioned-document';

const pin = (id: string, x: number, y = 0): Pin => ({ id, x, y, label: '' });
const sheet = (pins: Pin[] = []): SheetEdits => ({
  rotation: 0,
  straighten: 0,
  calibration: null,
  pins,
  measurements: [],
});

/** A save the test answers by hand: each call waits until `answer` or `refuse` is called. */
function manualSaves() {
  const calls: { doc: SheetEdits; revision: number; settle: (r: unknown, ok: boolean) => void }[] =
    [];
  const save = (doc: SheetEdits, revision: number) =>
    new Promise<{ revision: number }>((resolve, reject) => {
      calls.push({
        doc,
        revision,
        settle: (r, ok) => (ok ? resolve(r as { revision: number }) : reject(r)),
      });
    });
  return {
    save,
    calls,
    answer: (i: number, revision: number) => calls[i]!.settle({ revision }, true),
    refuse: (i: number, err: unknown) => calls[i]!.settle(err, false),
  };
}

class Stale extends Error {
  constructor(
    readonly revision: number,
    readonly theirs: SheetEdits,
  ) {
    super('409');
  }
}

function setup(
  start: SheetEdits,
  more: Partial<VersionedDocumentOptions<SheetEdits, SheetChanges>> = {},
) {
  let working = structuredClone(start);
  const saves = manualSaves();
  const onMerged = vi.fn();
  const doc = createVersionedDocument<SheetEdits, SheetChanges>({
    kind: sheetDocument,
    read: () => working,
    write: (d) => {
      working = d;
    },
    save: saves.save,
    conflictOf: (err) =>
      err instanceof Stale ? { revision: err.revision, theirs: err.theirs } : null,
    onConflict: 'merge',
    onMerged,
    ...more,
  });
  doc.load(4, start);
  return { doc, saves, onMerged, working: () => working };
}

/** Lets the mechanism's awaited promises run. */
const settle = () => new Promise((r) => setTimeout(r, 0));

describe('undo by edit', () => {
  it('edits of one group in a row are one undo step; another group or an undo starts a new one', () => {
    const { doc, working } = setup(sheet([pin('p1', 0)]));
    // A drag reports each position; the drag is one edit.
    for (const x of [1, 2, 3]) doc.edit((d) => void (d.pins[0]!.x = x), 'drag p1');
    doc.edit((d) => void (d.pins[0]!.label = 'bore'), 'label p1');
    expect(working().pins[0]).toMatchObject({ x: 3, label: 'bore' });
    doc.undo();
    expect(working().pins[0]).toMatchObject({ x: 3, label: '' });
    doc.undo();
    expect(working().pins[0]).toMatchObject({ x: 0, label: '' });
    expect(doc.state().canUndo).toBe(false);
    doc.redo();
    expect(working().pins[0]!.x).toBe(3);
    // After an undo the same group starts a new step rather than joining the old one.
    doc.edit((d) => void (d.pins[0]!.x = 5), 'drag p1');
    doc.undo();
    expect(working().pins[0]!.x).toBe(3);
  });

  it('an edit that changes nothing makes no step and nothing to save', () => {
    const { doc } = setup(sheet([pin('p1', 0)]));
    doc.edit((d) => void (d.pins[0]!.x = 0));
    expect(doc.state()).toMatchObject({ canUndo: false, unsaved: 0, saveState: 'saved' });
  });
});

describe('the save queue', () => {
  it('keeps one save in flight; edits made meanwhile go in one later save, sent as they are then', async () => {
    const { doc, saves } = setup(sheet());
    doc.edit((d) => void d.pins.push(pin('a', 1)));
    const first = doc.save();
    expect(doc.state().saveState).toBe('saving');
    doc.edit((d) => void d.pins.push(pin('b', 2)));
    const second = doc.save();
    doc.edit((d) => void d.pins.push(pin('c', 3)));
    const third = doc.save();
    expect(saves.calls).toHaveLength(1);
    expect(saves.calls[0]).toMatchObject({ revision: 4, doc: { pins: [{ id: 'a' }] } });

    saves.answer(0, 5);
    await first;
    await settle();
    // The two saves asked for while the first was in flight are one, with both edits.
    expect(saves.calls).toHaveLength(2);
    expect(saves.calls[1]!.revision).toBe(5);
    expect(saves.calls[1]!.doc.pins.map((p) => p.id)).toEqual(['a', 'b', 'c']);
    saves.answer(1, 6);
    await Promise.all([second, third]);
    expect(doc.state()).toMatchObject({ revision: 6, unsaved: 0, saveState: 'saved' });
    expect(saves.calls).toHaveLength(2);
  });

  it('a failed save keeps the edits unsaved and says so', async () => {
    const { doc, saves, working } = setup(sheet());
    doc.edit((d) => void d.pins.push(pin('a', 1)));
    const save = doc.save();
    saves.refuse(0, new Error('offline'));
    await expect(save).rejects.toThrow('offline');
    expect(doc.state()).toMatchObject({ saveState: 'failed', unsaved: 1, revision: 4 });
    expect(working().pins).toHaveLength(1);
  });

  it('autosaves once, a while after the last of several quick edits', async () => {
    vi.useFakeTimers();
    try {
      const { doc, saves } = setup(sheet(), { autosaveMs: 800 });
      doc.edit((d) => void d.pins.push(pin('a', 1)));
      await vi.advanceTimersByTimeAsync(500);
      doc.edit((d) => void d.pins.push(pin('b', 2)));
      await vi.advanceTimersByTimeAsync(500);
      expect(saves.calls).toHaveLength(0);
      await vi.advanceTimersByTimeAsync(300);
      expect(saves.calls).toHaveLength(1);
      expect(saves.calls[0]!.doc.pins).toHaveLength(2);
    } finally {
      vi.useRealTimers();
    }
  });
});

describe('a 409', () => {
  it('merges changes to different pins and saves both, never dropping either side', async () => {
    const { doc, saves, onMerged, working } = setup(sheet([pin('p1', 0), pin('p2', 0)]));
    doc.edit((d) => void (d.pins[1]!.x = 20));
    const save = doc.save();
    // Someone else moved p1 and added p3 at revision 5.
    saves.refuse(0, new Stale(5, sheet([pin('p1', 10), pin('p2', 0), pin('p3', 30)])));
    await settle();
    expect(onMerged).toHaveBeenCalledOnce();
    expect(saves.calls).toHaveLength(2);
    expect(saves.calls[1]!.revision).toBe(5);
    expect(saves.calls[1]!.doc.pins.map((p) => [p.id, p.x])).toEqual([
      ['p1', 10],
      ['p2', 20],
      ['p3', 30],
    ]);
    saves.answer(1, 6);
    await save;
    expect(working().pins.map((p) => p.x)).toEqual([10, 20, 30]);
    expect(doc.state()).toMatchObject({ revision: 6, saveState: 'saved', conflict: null });
  });

  it('asks when both moved the same pin to different places; either answer is taken', async () => {
    const { doc, saves, working } = setup(sheet([pin('p1', 0)]));
    doc.edit((d) => void (d.pins[0]!.x = 20));
    const save = doc.save();
    saves.refuse(0, new Stale(5, sheet([pin('p1', 10)])));
    await expect(save).rejects.toBeInstanceOf(Stale);
    const { conflict } = doc.state();
    expect(conflict).toMatchObject({ currentRevision: 5, clashes: ['pins p1'] });
    // Nothing is dropped while the builder decides, and nothing more is sent.
    expect(working().pins[0]!.x).toBe(20);
    await doc.save();
    expect(saves.calls).toHaveLength(1);

    doc.keepMine();
    expect(working().pins[0]!.x).toBe(20);
    expect(doc.state()).toMatchObject({ revision: 5, unsaved: 1, conflict: null });
    const again = doc.save();
    expect(saves.calls[1]).toMatchObject({ revision: 5 });
    saves.answer(1, 6);
    await again;
  });

  it("'ask' never merges on its own; taking theirs drops mine", async () => {
    const { doc, saves, onMerged, working } = setup(sheet([pin('p1', 0), pin('p2', 0)]), {
      onConflict: 'ask',
    });
    doc.edit((d) => void (d.pins[1]!.x = 20));
    const save = doc.save();
    saves.refuse(0, new Stale(5, sheet([pin('p1', 10), pin('p2', 0)])));
    await expect(save).rejects.toBeInstanceOf(Stale);
    expect(onMerged).not.toHaveBeenCalled();
    expect(doc.state().conflict?.clashes).toEqual([]);
    doc.takeTheirs();
    expect(working().pins.map((p) => p.x)).toEqual([10, 0]);
    expect(doc.state()).toMatchObject({ revision: 5, unsaved: 0, saveState: 'saved' });
  });

  it('an undo after a merge takes back only this browser’s edit', async () => {
    const { doc, saves, working } = setup(sheet([pin('p1', 0), pin('p2', 0)]));
    doc.edit((d) => void (d.pins[1]!.x = 20));
    const save = doc.save();
    saves.refuse(0, new Stale(5, sheet([pin('p1', 10), pin('p2', 0)])));
    await settle();
    saves.answer(1, 6);
    await save;
    doc.undo();
    expect(working().pins.map((p) => p.x)).toEqual([10, 0]);
  });
});

describe('a server operation taken in (adopt)', () => {
  it('becomes the base, keeps unsaved edits on top, and is one undo step', () => {
    const { doc, working } = setup(sheet([pin('p1', 0)]));
    doc.edit((d) => void (d.pins[0]!.label = 'mine'));
    const fromServer = sheet([pin('p1', 0)]);
    fromServer.measurements = [{ id: 'm1', from: 'p1', to: 'p1', dimension: 'x' }];
    doc.adopt(5, fromServer, { undoable: true });
    expect(doc.revision).toBe(5);
    expect(working().measurements).toHaveLength(1);
    expect(working().pins[0]!.label).toBe('mine');
    expect(doc.base().pins[0]!.label).toBe('');
    doc.undo();
    expect(working().measurements).toHaveLength(0);
    expect(working().pins[0]!.label).toBe('mine');
  });
});

describe('clashesOf', () => {
  it('finds fields changed both ways to different ends, and lets equal or separate changes pass', () => {
    const base = sheet([pin('p1', 0), pin('p2', 0)]);
    const moved = (x: number, y = 0) => sheet([pin('p1', x, y), pin('p2', 0)]);
    const d = sheetDocument.diff;
    expect(clashesOf(d(base, moved(1)), d(base, moved(2)))).toEqual(['pins p1']);
    expect(clashesOf(d(base, moved(1)), d(base, moved(1)))).toEqual([]);
    // One moved it across, the other down: both fields survive.
    expect(clashesOf(d(base, moved(1, 0)), d(base, moved(0, 1)))).toEqual([]);
    const turned = { ...base, rotation: 90 as const };
    expect(clashesOf(d(base, turned), d(base, { ...base, rotation: 180 }))).toEqual(['rotation']);
  });
});
