import { defineStore } from 'pinia';
import { computed, ref, shallowRef } from 'vue';
import type { Sheet, SheetCalibrationDto, UpdateSheetBody } from '@shared/api';
import { rotateSheetPoint, straightenRotation, type SheetPoint } from '@shared/engine';
import { ApiError } from '@/api/client';
import { describeError } from '@/api/messages';
import { sheetsApi } from '@/api/sheets';
import { editsOf, sheetDocument, type SheetChanges, type SheetEdits } from '@/lib/sheet-document';
import {
  createVersionedDocument,
  type DocumentConflict,
  type SaveState,
} from '@/lib/versioned-document';
import { useModelStore } from './model';
import { tryBuildCalibration } from '@/lib/sheet-calibration';
import { fitView, keepCentre, zoomAround, type ScreenSize, type SheetView } from '@/lib/sheet-view';

export type { SheetEdits, SaveState };

export type SheetTool = 'pan' | 'pin' | 'measure' | 'pick';

/** A measurement between two pins, named: the server measures it and writes both documents. */
export interface MeasureRequest {
  from: string;
  to: string;
  name: string;
  label: string;
  /** The dimension's name before a rename. */
  previousName?: string;
}

/** A batch of files on its way up, for the progress bar. */
export interface UploadBatch {
  id: number;
  names: string[];
  loaded: number;
  total: number;
  state: 'sending' | 'processing' | 'done' | 'failed';
  error: string | null;
}

/** A line or polygon the calibration panel wants drawn over the sheet while it is being set. */
export interface SheetGuide {
  id: string;
  points: SheetPoint[];
  closed?: boolean;
  label?: string;
}

/** Points the canvas is collecting for a panel (calibration picks, the straighten line). */
export interface PickRequest {
  count: number;
  prompt: string;
  points: SheetPoint[];
  resolve: (points: SheetPoint[] | null) => void;
}

const autosaveDelayMs = 800;

const clone = <T>(v: T): T => JSON.parse(JSON.stringify(v)) as T;

let pinCounter = 0;
/** Short ids, unique enough within one sheet (the contract caps them at 40 characters). */
export function newId(prefix: string): string {
  pinCounter = (pinCounter + 1) % 1e6;
  return `${prefix}${Date.now().toString(36)}${pinCounter.toString(36)}${Math.random().toString(36).slice(2, 6)}`;
}

/**
 * Sheets of the open project, and the one sheet open on the canvas as plain data: its pins,
 * calibration, measurements and turn (undoable, saved by PATCH), the view (zoom and pan, not
 * saved) and the canvas tool. Konva only ever draws what is here.
 */
export const useSheetsStore = defineStore('sheets', () => {
  const projectId = ref('');
  const sheets = ref<Sheet[]>([]);
  const loadingList = ref(false);
  const listError = ref('');
  const uploads = ref<UploadBatch[]>([]);

  const current = ref<Sheet | null>(null);
  const view = ref<SheetView>({ x: 0, y: 0, zoom: 1 });
  const screen = ref<ScreenSize>({ width: 800, height: 600 });
  const tool = ref<SheetTool>('pan');
  const pick = shallowRef<PickRequest | null>(null);
  const guides = ref<SheetGuide[]>([]);
  const selectedPin = ref<string | null>(null);
  /** Two pins chosen with the measure tool, waiting for the dimension's name. */
  const pendingMeasure = ref<{ from: string; to: string } | null>(null);
  /** The first pin chosen with the measure tool. */
  const measureFrom = ref<string | null>(null);

  const saveState = ref<SaveState>('saved');
  const saveError = ref('');
  /** Something the builder must be told (e.g. the sheet was reloaded after someone else saved). */
  const notice = ref('');
  const canUndo = ref(false);
  const canRedo = ref(false);
  /** Someone else changed what this browser changed too: which way to go is the builder's. */
  const conflict = shallowRef<DocumentConflict<SheetEdits, SheetChanges> | null>(null);
  let batchSeq = 0;

  // The open sheet's edits as a versioned document: undo by edit, autosave, and a 409 merged
  // with the other save (asked only when both changed the same pin, measurement or setting).
  const doc = createVersionedDocument<SheetEdits, SheetChanges>({
    kind: sheetDocument,
    read: () => current.value!,
    write: (e) => {
      if (current.value) Object.assign(current.value, e);
    },
    save: async (e, revision) => {
      const id = current.value!.id;
      const saved = await sheetsApi.update(projectId.value, id, { revision, ...e });
      if (current.value?.id === saved.id) current.value.updatedAt = saved.updatedAt;
      sheets.value = sheets.value.map((x) => (x.id === saved.id ? saved : x));
      return { revision: saved.revision };
    },
    conflictOf: (err) => {
      if (!(err instanceof ApiError) || err.code !== 'conflict') return null;
      const details = err.details as { currentRevision: number; sheet?: Sheet };
      if (!details.sheet) return null;
      return { revision: details.currentRevision, theirs: editsOf(details.sheet) };
    },
    onConflict: 'merge',
    autosaveMs: autosaveDelayMs,
    onState: (st) => {
      if (current.value) current.value.revision = st.revision;
      canUndo.value = st.canUndo;
      canRedo.value = st.canRedo;
      saveState.value = st.saveState;
      saveError.value = st.saveState === 'failed' ? describeError(st.error) : '';
      conflict.value = st.conflict;
    },
    onMerged: () => {
      notice.value =
        'Someone else saved this sheet while you were working. Their changes and yours are ' +
        'both kept.';
    },
  });

  const turn = computed(() =>
    current.value ? current.value.rotation + current.value.straighten : 0,
  );
  const calibration = computed(() => tryBuildCalibration(current.value?.calibration ?? null));
  const pinsById = computed(() => new Map((current.value?.pins ?? []).map((p) => [p.id, p])));

  // ---- the list -------------------------------------------------------------------------

  async function loadList(id: string) {
    if (projectId.value !== id) sheets.value = [];
    projectId.value = id;
    loadingList.value = true;
    listError.value = '';
    try {
      sheets.value = await sheetsApi.list(id);
    } catch (err) {
      listError.value = describeError(err);
    } finally {
      loadingList.value = false;
    }
  }

  /** Uploads files as one request; the sheets it makes join the list. */
  async function upload(files: File[]): Promise<Sheet[]> {
    const batch: UploadBatch = {
      id: ++batchSeq,
      names: files.map((f) => f.name),
      loaded: 0,
      total: files.reduce((s, f) => s + f.size, 0),
      state: 'sending',
      error: null,
    };
    uploads.value = [batch, ...uploads.value];
    const live = () => uploads.value.find((b) => b.id === batch.id)!;
    try {
      const made = await sheetsApi.upload(projectId.value, files, (p) => {
        const b = live();
        b.loaded = p.loaded;
        b.total = p.total;
        // Every byte sent: the server is now checking and storing.
        if (p.loaded >= p.total) b.state = 'processing';
      });
      const b = live();
      b.state = 'done';
      b.loaded = b.total;
      sheets.value = [...sheets.value, ...made];
      return made;
    } catch (err) {
      const b = live();
      b.state = 'failed';
      b.error = describeError(err);
      return [];
    }
  }

  function dismissUpload(id: number) {
    uploads.value = uploads.value.filter((b) => b.id !== id);
  }

  async function patchMeta(sheet: Sheet, body: Omit<UpdateSheetBody, 'revision'>) {
    const open = current.value?.id === sheet.id;
    const saved = await sheetsApi.update(projectId.value, sheet.id, {
      revision: open ? doc.revision : sheet.revision,
      ...body,
    });
    sheets.value = sheets.value.map((s) => (s.id === saved.id ? saved : s));
    if (open && current.value?.id === saved.id) {
      current.value.title = saved.title;
      current.value.kind = saved.kind;
      doc.adopt(saved.revision, editsOf(saved));
    }
    return saved;
  }

  async function remove(sheet: Sheet) {
    await sheetsApi.remove(projectId.value, sheet.id);
    sheets.value = sheets.value.filter((s) => s.id !== sheet.id);
  }

  // ---- the open sheet -------------------------------------------------------------------

  async function open(pid: string, sheetId: string) {
    // The sheet open until now is saved first: the document moves on to the next one.
    await doc.flush().catch(() => {});
    doc.dispose();
    projectId.value = pid;
    cancelPick();
    current.value = null;
    const sheet = await sheetsApi.get(pid, sheetId);
    current.value = sheet;
    doc.load(sheet.revision, sheet);
    selectedPin.value = null;
    pendingMeasure.value = null;
    measureFrom.value = null;
    guides.value = [];
    notice.value = '';
    fit();
  }

  /** Opens a sheet already in hand (the benchmark page; no server round trip). */
  function openLocal(sheet: Sheet) {
    current.value = clone(sheet);
    doc.load(sheet.revision, current.value);
    fit();
  }

  function close() {
    cancelPick();
    doc.dispose();
    current.value = null;
  }

  /**
   * Every canvas edit goes through here: one undo step, then a debounced save. Edits naming
   * the same `group` one after another are one undo step. Changed in place, so only what
   * changed is redrawn (one dragged pin, not all 2,000).
   */
  function edit(change: (s: SheetEdits) => void, group?: string) {
    if (!current.value) return;
    doc.edit(change, group);
  }

  function step(go: () => void) {
    const s = current.value;
    if (!s) return;
    const before = s.rotation + s.straighten;
    go();
    if (before !== s.rotation + s.straighten) {
      view.value = keepCentre(view.value, before, s.rotation + s.straighten, screen.value);
    }
    if (selectedPin.value && !pinsById.value.has(selectedPin.value)) selectedPin.value = null;
  }
  const undo = () => step(doc.undo);
  const redo = () => step(doc.redo);

  /**
   * Saves the working copy now (autosave does it 800 ms after an edit); one save in flight,
   * later ones wait and go as one. A 409 is merged with the other save, or asks (`conflict`).
   */
  async function save(): Promise<void> {
    if (!current.value) return;
    await doc.save().catch(() => {});
  }

  /** After a clash: keep this browser's changes on top of the other save's, and save them. */
  function keepMine() {
    step(doc.keepMine);
    void save();
  }

  /** After a clash: take the other save's sheet, dropping this browser's changes. */
  function takeTheirs() {
    step(doc.takeTheirs);
  }

  /**
   * A measurement between two pins, as one server operation: the sheet is saved first (the
   * server measures with the stored pins and calibration), then the server writes the sheet's
   * record and the model's scaled dimension together; both answers are taken into their
   * documents (the measurement is one undo step on the sheet). Answers '' or what went wrong.
   * Someone else's newer sheet or model is taken in once and the measurement sent again.
   */
  async function measure(req: MeasureRequest): Promise<string> {
    const s = current.value;
    if (!s) return 'Open a sheet first';
    const model = useModelStore();
    for (let attempt = 0; ; attempt += 1) {
      await doc.flush().catch(() => {});
      const st = doc.state();
      if (st.conflict) {
        return 'Someone else changed the same pins on this sheet: choose whose to keep, then measure again';
      }
      if (st.unsaved > 0) return `The sheet could not be saved first: ${saveError.value}`;
      try {
        const answer = await sheetsApi.measure(projectId.value, s.id, {
          sheetRevision: doc.revision,
          modelRevision: model.revision,
          from: req.from,
          to: req.to,
          dimension: req.name,
          label: req.label || undefined,
          previousName: req.previousName,
        });
        if (current.value?.id === answer.sheet.id) {
          doc.adopt(answer.sheet.revision, editsOf(answer.sheet), { undoable: true });
          current.value.updatedAt = answer.sheet.updatedAt;
        }
        sheets.value = sheets.value.map((x) => (x.id === answer.sheet.id ? answer.sheet : x));
        model.adopt(answer.model.revision, answer.model.model);
        model.selected = answer.dimension;
        return '';
      } catch (err) {
        if (attempt > 0 || !(err instanceof ApiError) || err.code !== 'conflict') {
          return describeError(err);
        }
        // Someone saved first: take their sheet or model in, then measure once more.
        const details = err.details as {
          currentRevision: number;
          sheet?: Sheet;
          model?: Parameters<typeof model.adopt>[1];
        };
        if (details.sheet && !doc.meet(details.currentRevision, editsOf(details.sheet))) {
          return 'Someone else changed the same pins on this sheet: choose whose to keep, then measure again';
        }
        if (details.model && !model.meet(details.currentRevision, details.model)) {
          return (
            'Someone else saved the model while you had unsaved changes: save it (choosing ' +
            'whose changes to keep), then measure again'
          );
        }
      }
    }
  }

  // ---- view -----------------------------------------------------------------------------

  function setScreen(size: ScreenSize) {
    const first = screen.value.width === 800 && screen.value.height === 600;
    screen.value = size;
    if (first) fit();
  }

  function fit() {
    const s = current.value;
    if (!s) return;
    view.value = fitView({ width: s.widthPx, height: s.heightPx }, turn.value, screen.value);
  }

  function zoomBy(factor: number, at?: SheetPoint) {
    const centre = at ?? { x: screen.value.width / 2, y: screen.value.height / 2 };
    view.value = zoomAround(view.value, turn.value, centre, factor);
  }

  function panBy(dx: number, dy: number) {
    view.value = { ...view.value, x: view.value.x + dx, y: view.value.y + dy };
  }

  /** A quarter turn clockwise (or back), keeping what is at the centre in place. */
  function rotateQuarter(direction: 1 | -1 = 1) {
    const s = current.value;
    if (!s) return;
    const before = turn.value;
    edit((e) => {
      e.rotation = ((((e.rotation + direction * 90) % 360) + 360) % 360) as Sheet['rotation'];
    });
    view.value = keepCentre(view.value, before, turn.value, screen.value);
  }

  /**
   * Levels the line a–b (sheet px) on screen: level if it runs nearer level after the quarter
   * turns, plumb otherwise, so the correction stays within ±45°.
   */
  function straightenAlong(a: SheetPoint, b: SheetPoint) {
    const s = current.value;
    if (!s) return;
    const origin = { x: 0, y: 0 };
    const [ra, rb] = [
      rotateSheetPoint(a, origin, s.rotation),
      rotateSheetPoint(b, origin, s.rotation),
    ];
    let r = straightenRotation(ra, rb, 'level').rotationDeg;
    if (Math.abs(r) > 45) r = straightenRotation(ra, rb, 'plumb').rotationDeg;
    const before = turn.value;
    edit((e) => {
      e.straighten = Math.round(Math.max(-45, Math.min(45, r)) * 1000) / 1000;
    });
    view.value = keepCentre(view.value, before, turn.value, screen.value);
  }

  function resetStraighten() {
    const before = turn.value;
    edit((e) => {
      e.straighten = 0;
    });
    view.value = keepCentre(view.value, before, turn.value, screen.value);
  }

  // ---- picks ----------------------------------------------------------------------------

  /** Asks the canvas for `count` points; null when cancelled (Esc, another tool). */
  function pickPoints(count: number, prompt: string): Promise<SheetPoint[] | null> {
    cancelPick();
    return new Promise((resolve) => {
      pick.value = { count, prompt, points: [], resolve };
      tool.value = 'pick';
    });
  }

  function addPickPoint(p: SheetPoint) {
    const req = pick.value;
    if (!req) return;
    const points = [...req.points, p];
    if (points.length >= req.count) {
      pick.value = null;
      tool.value = 'pan';
      req.resolve(points);
    } else {
      pick.value = { ...req, points };
    }
  }

  function cancelPick() {
    const req = pick.value;
    pick.value = null;
    if (tool.value === 'pick') tool.value = 'pan';
    req?.resolve(null);
  }

  function setTool(t: SheetTool) {
    if (t !== 'pick') cancelPick();
    measureFrom.value = null;
    tool.value = t;
  }

  // ---- pins and measurements ------------------------------------------------------------

  function addPin(p: SheetPoint, label = ''): string {
    const id = newId('p');
    edit((e) => {
      e.pins.push({ id, x: round2(p.x), y: round2(p.y), label });
    });
    return id;
  }

  function movePin(id: string, p: SheetPoint) {
    edit((e) => {
      const pin = e.pins.find((x) => x.id === id);
      if (pin) Object.assign(pin, { x: round2(p.x), y: round2(p.y) });
    });
  }

  function labelPin(id: string, label: string) {
    edit((e) => {
      const pin = e.pins.find((x) => x.id === id);
      if (pin) pin.label = label.slice(0, 80);
    });
  }

  /** Deletes a pin and the measurements that used it (their dimensions stay in the model). */
  function deletePin(id: string) {
    edit((e) => {
      e.pins = e.pins.filter((p) => p.id !== id);
      e.measurements = e.measurements.filter((m) => m.from !== id && m.to !== id);
    });
    if (selectedPin.value === id) selectedPin.value = null;
  }

  /** Records (or re-points) the measurement kept as `dimension`. */
  function putMeasurement(from: string, to: string, dimension: string, previousName?: string) {
    edit((e) => {
      const key = previousName ?? dimension;
      const at = e.measurements.findIndex(
        (m) =>
          m.dimension === key ||
          (m.from === from && m.to === to) ||
          (m.from === to && m.to === from),
      );
      const found = e.measurements[at];
      const record = { id: found ? found.id : newId('m'), from, to, dimension };
      if (found) e.measurements[at] = record;
      else e.measurements.push(record);
    });
  }

  function removeMeasurement(id: string) {
    edit((e) => {
      e.measurements = e.measurements.filter((m) => m.id !== id);
    });
  }

  function setCalibration(cal: SheetCalibrationDto | null) {
    edit((e) => {
      e.calibration = cal;
    });
  }

  return {
    projectId,
    sheets,
    loadingList,
    listError,
    uploads,
    current,
    view,
    screen,
    tool,
    pick,
    guides,
    selectedPin,
    pendingMeasure,
    measureFrom,
    saveState,
    saveError,
    notice,
    canUndo,
    canRedo,
    turn,
    calibration,
    pinsById,
    loadList,
    upload,
    dismissUpload,
    patchMeta,
    remove,
    open,
    openLocal,
    close,
    conflict,
    edit,
    undo,
    redo,
    save,
    keepMine,
    takeTheirs,
    measure,
    setScreen,
    fit,
    zoomBy,
    panBy,
    rotateQuarter,
    straightenAlong,
    resetStraighten,
    pickPoints,
    addPickPoint,
    cancelPick,
    setTool,
    addPin,
    movePin,
    labelPin,
    deletePin,
    putMeasurement,
    removeMeasurement,
    setCalibration,
  };
});

const round2 = (v: number) => Math.round(v * 100) / 100;
