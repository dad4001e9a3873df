import type { Locator, Page } from 'playwright-core';

/** Clicks a point of the sheet (sheet px), through the canvas's view (read from its data-view). */
export async function clickSheet(page: Page, canvas: Locator, p: { x: number; y: number }) {
  const view = JSON.parse((await canvas.getAttribute('data-view'))!) as {
    x: number;
    y: number;
    zoom: number;
    turn: number;
  };
  const box = (await canvas.boundingBox())!;
  const t = (view.turn * Math.PI) / 180;
  const x = box.x + view.x + view.zoom * (Math.cos(t) * p.x - Math.sin(t) * p.y);
  const y = box.y + view.y + view.zoom * (Math.sin(t) * p.x + Math.cos(t) * p.y);
  await page.mouse.click(x, y);
}
