import { defineStore } from 'pinia';
import { computed, ref, shallowRef } from 'vue';
import type { Measurement, Pin, Sheet, SheetCalibrationDto, UpdateSheetBody } from '@shared/api';
import { rotateSheetPoint, straightenRotation, type SheetPoint } from '@shared/engine';
import { ApiError } from '@/api/client';
import { describeError } from '@/api/messages';
import { sheetsApi } from '@/api/sheets';
import { tryBuildCalibration } from '@/lib/sheet-calibration';
import { fitView, keepCentre, zoomAround, type ScreenSize, type SheetView } from '@/lib/sheet-view';

/** What a canvas edit can change: the part of a sheet that undo steps through and PATCH saves. */
export interface SheetEdits {
  rotation: Sheet['rotation'];
  straighten: number;
  calibration: SheetCalibrationDto | null;
  pins: Pin[];
  measurements: Measurement[];
}

export type SheetTool = 'pan' | 'pin' | 'measure' | 'pick';
export type SaveState = 'saved' | 'unsaved' | 'saving' | 'failed';

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
const undoDepth = 200;

const editsOf = (s: Sheet): SheetEdits => ({
  rotation: s.rotation,
  straighten: s.straighten,
  calibration: s.calibration,
  pins: s.pins,
  measurements: s.measurements,
});

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
  const undoStack: string[] = [];
  const redoStack: string[] = [];
  let saveTimer: ReturnType<typeof setTimeout> | undefined;
  let inFlight: Promise<void> | null = null;
  let editsSinceSave = 0;
  let batchSeq = 0;

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
    const saved = await sheetsApi.update(projectId.value, sheet.id, {
      revision: sheet.revision,
      ...body,
    });
    sheets.value = sheets.value.map((s) => (s.id === saved.id ? saved : s));
    if (current.value?.id === saved.id) {
      current.value.title = saved.title;
      current.value.kind = saved.kind;
      current.value.revision = saved.revision;
    }
    return saved;
  }

  async function remove(sheet: Sheet) {
    await sheetsApi.remove(projectId.value, sheet.id);
    sheets.value = sheets.value.filter((s) => s.id !== sheet.id);
  }

  // ---- the open sheet -------------------------------------------------------------------

  function resetHistory() {
    undoStack.length = 0;
    redoStack.length = 0;
    canUndo.value = canRedo.value = false;
  }

  async function open(pid: string, sheetId: string) {
    projectId.value = pid;
    cancelPick();
    current.value = null;
    const sheet = await sheetsApi.get(pid, sheetId);
    current.value = sheet;
    selectedPin.value = null;
    pendingMeasure.value = null;
    measureFrom.value = null;
    guides.value = [];
    saveState.value = 'saved';
    saveError.value = '';
    notice.value = '';
    editsSinceSave = 0;
    resetHistory();
    fit();
  }

  /** Opens a sheet already in hand (the benchmark page; no server round trip). */
  function openLocal(sheet: Sheet) {
    current.value = clone(sheet);
    resetHistory();
    fit();
  }

  function close() {
    cancelPick();
    clearTimeout(saveTimer);
    current.value = null;
  }

  /** Every canvas edit goes through here: one undo step, then a debounced save. */
  function edit(change: (s: SheetEdits) => void) {
    const s = current.value;
    if (!s) return;
    undoStack.push(JSON.stringify(editsOf(s)));
    if (undoStack.length > undoDepth) undoStack.shift();
    redoStack.length = 0;
    // In place, so only what changed is redrawn (one dragged pin, not all 2,000).
    change(s);
    canUndo.value = true;
    canRedo.value = false;
    touched();
  }

  function step(from: string[], to: string[]) {
    const s = current.value;
    const snapshot = from.pop();
    if (!s || !snapshot) return;
    to.push(JSON.stringify(editsOf(s)));
    const before = s.rotation + s.straighten;
    Object.assign(s, JSON.parse(snapshot) as SheetEdits);
    if (before !== s.rotation + s.straighten) {
      view.value = keepCentre(view.value, before, s.rotation + s.straighten, screen.value);
    }
    if (selectedPin.value && !pinsById.value.has(selectedPin.value)) selectedPin.value = null;
    canUndo.value = undoStack.length > 0;
    canRedo.value = redoStack.length > 0;
    touched();
  }
  const undo = () => step(undoStack, redoStack);
  const redo = () => step(redoStack, undoStack);

  function touched() {
    editsSinceSave += 1;
    saveState.value = 'unsaved';
    clearTimeout(saveTimer);
    saveTimer = setTimeout(() => void save(), autosaveDelayMs);
  }

  /** PATCHes the working copy against the revision it was loaded at; 409 reloads the sheet. */
  async function save(): Promise<void> {
    clearTimeout(saveTimer);
    if (inFlight) {
      await inFlight;
      if (editsSinceSave > 0) return save();
      return;
    }
    const s = current.value;
    if (!s || editsSinceSave === 0) return;
    const sentEdits = editsSinceSave;
    const body: UpdateSheetBody = { revision: s.revision, ...clone(editsOf(s)) };
    saveState.value = 'saving';
    inFlight = (async () => {
      try {
        const saved = await sheetsApi.update(projectId.value, s.id, body);
        if (current.value?.id !== saved.id) return;
        current.value.revision = saved.revision;
        current.value.updatedAt = saved.updatedAt;
        sheets.value = sheets.value.map((x) => (x.id === saved.id ? saved : x));
        editsSinceSave -= sentEdits;
        saveState.value = editsSinceSave > 0 ? 'unsaved' : 'saved';
        saveError.value = '';
      } catch (err) {
        if (err instanceof ApiError && err.code === 'conflict') {
          const fresh = await sheetsApi.get(projectId.value, s.id).catch(() => null);
          if (fresh && current.value?.id === fresh.id) {
            current.value = fresh;
            editsSinceSave = 0;
            resetHistory();
            saveState.value = 'saved';
            notice.value =
              'Someone else saved this sheet while you were working. It has been reloaded with ' +
              'their version; your last changes were not kept — please make them again.';
            return;
          }
        }
        saveState.value = 'failed';
        saveError.value = describeError(err);
      } finally {
        inFlight = null;
      }
    })();
    await inFlight;
    if (editsSinceSave > 0 && (saveState.value as SaveState) === 'unsaved') {
      saveTimer = setTimeout(() => void save(), autosaveDelayMs);
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
      const record = { id: at >= 0 ? e.measurements[at].id : newId('m'), from, to, dimension };
      if (at >= 0) e.measurements[at] = record;
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
    edit,
    undo,
    redo,
    save,
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
