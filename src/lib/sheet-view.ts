import type { SheetPoint } from '@shared/engine';

/**
 * The canvas view as plain data: the screen position of the sheet's pixel (0, 0) and the zoom
 * (screen px per sheet px). The turn (quarter turns + straighten) comes from the sheet, so the
 * mapping is screen = (x, y) + zoom · R(turn) · p — the transform a Konva stage applies with
 * { x, y, scaleX: zoom, scaleY: zoom, rotation: turn }.
 */
export interface SheetView {
  x: number;
  y: number;
  zoom: number;
}

export interface ScreenSize {
  width: number;
  height: number;
}

export const minZoom = 0.01;
export const maxZoom = 16;

const rad = (deg: number) => (deg * Math.PI) / 180;
const clampZoom = (z: number) => Math.min(maxZoom, Math.max(minZoom, z));

export function sheetToScreen(view: SheetView, turnDeg: number, p: SheetPoint): SheetPoint {
  const [c, s] = [Math.cos(rad(turnDeg)), Math.sin(rad(turnDeg))];
  return {
    x: view.x + view.zoom * (c * p.x - s * p.y),
    y: view.y + view.zoom * (s * p.x + c * p.y),
  };
}

export function screenToSheet(view: SheetView, turnDeg: number, q: SheetPoint): SheetPoint {
  const [c, s] = [Math.cos(rad(turnDeg)), Math.sin(rad(turnDeg))];
  const [dx, dy] = [(q.x - view.x) / view.zoom, (q.y - view.y) / view.zoom];
  return { x: c * dx + s * dy, y: -s * dx + c * dy };
}

/** The view that shows the whole turned sheet, centred, with a margin in screen px. */
export function fitView(
  sheet: { width: number; height: number },
  turnDeg: number,
  screen: ScreenSize,
  margin = 16,
): SheetView {
  const corners = [
    { x: 0, y: 0 },
    { x: sheet.width, y: 0 },
    { x: sheet.width, y: sheet.height },
    { x: 0, y: sheet.height },
  ].map((p) => sheetToScreen({ x: 0, y: 0, zoom: 1 }, turnDeg, p));
  const xs = corners.map((p) => p.x);
  const ys = corners.map((p) => p.y);
  const [minX, maxX, minY, maxY] = [
    Math.min(...xs),
    Math.max(...xs),
    Math.min(...ys),
    Math.max(...ys),
  ];
  const zoom = clampZoom(
    Math.min(
      Math.max(1, screen.width - 2 * margin) / (maxX - minX),
      Math.max(1, screen.height - 2 * margin) / (maxY - minY),
    ),
  );
  return {
    zoom,
    x: screen.width / 2 - zoom * ((minX + maxX) / 2),
    y: screen.height / 2 - zoom * ((minY + maxY) / 2),
  };
}

/** Zooms by `factor` keeping the sheet point under `at` (screen px) where it is. */
export function zoomAround(
  view: SheetView,
  turnDeg: number,
  at: SheetPoint,
  factor: number,
): SheetView {
  const zoom = clampZoom(view.zoom * factor);
  const k = zoom / view.zoom;
  return { zoom, x: at.x - k * (at.x - view.x), y: at.y - k * (at.y - view.y) };
}

/** The view after the turn changes, keeping the sheet point at the screen centre in place. */
export function keepCentre(
  view: SheetView,
  fromTurn: number,
  toTurn: number,
  screen: ScreenSize,
): SheetView {
  const centre = { x: screen.width / 2, y: screen.height / 2 };
  const p = screenToSheet(view, fromTurn, centre);
  const moved = sheetToScreen({ ...view, x: 0, y: 0 }, toTurn, p);
  return { zoom: view.zoom, x: centre.x - moved.x, y: centre.y - moved.y };
}

/** The sheet rectangle (axis-aligned in sheet px) that covers the screen. */
export function visibleSheetRect(view: SheetView, turnDeg: number, screen: ScreenSize) {
  const pts = [
    { x: 0, y: 0 },
    { x: screen.width, y: 0 },
    { x: screen.width, y: screen.height },
    { x: 0, y: screen.height },
  ].map((q) => screenToSheet(view, turnDeg, q));
  const xs = pts.map((p) => p.x);
  const ys = pts.map((p) => p.y);
  const x = Math.min(...xs);
  const y = Math.min(...ys);
  return { x, y, width: Math.max(...xs) - x, height: Math.max(...ys) - y };
}

/** Distance in px from point p to the segment a–b. */
export function distanceToSegment(p: SheetPoint, a: SheetPoint, b: SheetPoint): number {
  const [dx, dy] = [b.x - a.x, b.y - a.y];
  const len2 = dx * dx + dy * dy;
  const t = len2 === 0 ? 0 : Math.max(0, Math.min(1, ((p.x - a.x) * dx + (p.y - a.y) * dy) / len2));
  return Math.hypot(p.x - (a.x + t * dx), p.y - (a.y + t * dy));
}
