import { onBeforeUnmount, ref, shallowRef, watch, type Ref } from 'vue';
import { pdfFrameDpi } from '@shared/api';
import type { TiffAnswer } from '@/workers/tiff-decode';
import { visibleSheetRect, type ScreenSize, type SheetView } from '@/lib/sheet-view';

/** What to draw: a source and the sheet-pixel rectangle it covers. */
export interface SheetRaster {
  image: CanvasImageSource;
  x: number;
  y: number;
  width: number;
  height: number;
  /** Source pixels per sheet pixel. */
  density: number;
}

export interface SheetImageSource {
  url: string;
  mimeType: string;
  page: number;
  widthPx: number;
  heightPx: number;
}

export interface SheetImageProgress {
  label: string;
  /** 0…1, or null while the length of the work is unknown. */
  fraction: number | null;
}

/** A level is never made smaller than this on its long side: the first view's floor. */
const coarsestSide = 512;
/** The largest PDF render kept as one canvas (px); beyond it only the visible part is drawn. */
const pdfMaxPixels = 16e6;
const pdfMaxDensity = 6;
const levelDelayMs = 120;
const pdfDelayMs = 250;

const nextFrame = () => new Promise<void>((r) => requestAnimationFrame(() => r()));

async function fetchBytes(
  url: string,
  onProgress: (fraction: number | null) => void,
  signal: AbortSignal,
): Promise<Blob> {
  const res = await fetch(url, { credentials: 'same-origin', signal });
  if (!res.ok) throw new Error(`The sheet's file could not be loaded (${res.status}).`);
  const total = Number(res.headers.get('Content-Length') ?? 0);
  if (!res.body || !total) return res.blob();
  const reader = res.body.getReader();
  const chunks: BlobPart[] = [];
  let loaded = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    chunks.push(value as BlobPart);
    loaded += value.byteLength;
    onProgress(Math.min(1, loaded / total));
  }
  return new Blob(chunks, { type: res.headers.get('Content-Type') ?? '' });
}

async function decodeTiff(blob: Blob): Promise<ImageBitmap> {
  const buffer = await blob.arrayBuffer();
  const worker = new Worker(new URL('../workers/tiff-decode.ts', import.meta.url), {
    type: 'module',
  });
  return new Promise<ImageBitmap>((resolve, reject) => {
    worker.onmessage = (e: MessageEvent<TiffAnswer>) => {
      worker.terminate();
      if (e.data.ok) resolve(e.data.bitmap);
      else reject(new Error(e.data.message));
    };
    worker.onerror = (e) => {
      worker.terminate();
      reject(new Error(e.message || 'The TIFF decoder failed'));
    };
    worker.postMessage(buffer, [buffer]);
  }).finally(() => worker.terminate());
}

/**
 * Loads a sheet's file and keeps the raster the current zoom needs:
 * - images (PNG, JPEG, and TIFF decoded in a worker) become a pyramid of halvings made with
 *   createImageBitmap's resize, built level by level as the zoom first asks for it; only the
 *   one level the zoom needs is drawn;
 * - a PDF page is rendered with pdfjs at the density the zoom needs: the whole page up to
 *   16 Mpx, and past that, the visible part only, re-rendered (debounced) when the zoom or the
 *   view moves a long way.
 */
export function useSheetImage(
  source: Ref<SheetImageSource | null>,
  view: Ref<SheetView>,
  screen: Ref<ScreenSize>,
  turn: Ref<number>,
) {
  const base = shallowRef<SheetRaster | null>(null);
  const detail = shallowRef<SheetRaster | null>(null);
  const progress = ref<SheetImageProgress | null>(null);
  const error = ref('');
  /** When loading began (performance.now()), for the first-view timing. */
  const startedAt = ref(0);

  let abort: AbortController | null = null;
  let disposeKind: (() => void) | null = null;

  const dpr = () => (typeof window === 'undefined' ? 1 : window.devicePixelRatio || 1);

  // ---- images: a pyramid of halvings ----------------------------------------------------

  /**
   * The image's levels: level k is the scan at 1/2^k. Where the browser's JPEG decoder can
   * decode straight to a smaller size (WebCodecs ImageDecoder with a desired size: libjpeg's
   * DCT scaling, 1/2, 1/4 and 1/8, which averages 8 × 8 blocks), levels 1–3 come from it in a
   * fraction of a full decode, and the full decode waits until the zoom asks for level 0.
   * Other images are decoded whole once and halved level by level.
   */
  function imagePyramid(
    src: SheetImageSource,
    size: { width: number; height: number },
    decodeFull: () => Promise<ImageBitmap>,
    decodeScaled: ((width: number, height: number) => Promise<ImageBitmap>) | null,
  ) {
    const levels = new Map<number, ImageBitmap>();
    const making = new Map<number, Promise<ImageBitmap>>();
    const longSide = Math.max(size.width, size.height);
    const deepest = Math.max(0, Math.floor(Math.log2(longSide / coarsestSide)));
    let timer: ReturnType<typeof setTimeout> | undefined;
    let disposed = false;
    const dims = (k: number) => ({
      width: Math.max(1, Math.round(size.width / 2 ** k)),
      height: Math.max(1, Math.round(size.height / 2 ** k)),
    });

    /** The level whose density is the least that still covers the screen's pixels. */
    const levelFor = (zoom: number) => {
      const need = (zoom * dpr() * size.width) / src.widthPx;
      return Math.max(0, Math.min(deepest, Math.floor(-Math.log2(Math.max(need, 1e-6)))));
    };

    /**
     * Level k from the decoder, or level k − 1 halved: a bilinear ('low') resize by exactly
     * one half averages each 2 × 2 block, so the chain is box-filtered; 'medium' would first
     * build mipmaps of the whole scan (≈ 1 s for 70 Mpx here).
     */
    function make(k: number): Promise<ImageBitmap> {
      const have = levels.get(k);
      if (have) return Promise.resolve(have);
      let p = making.get(k);
      if (p) return p;
      const d = dims(k);
      if (k === 0) p = decodeFull();
      else if (decodeScaled && k <= 3) p = decodeScaled(d.width, d.height);
      else
        p = make(k - 1).then((finer) =>
          createImageBitmap(finer, {
            resizeWidth: d.width,
            resizeHeight: d.height,
            resizeQuality: 'low',
          }),
        );
      p = p.then((bmp) => {
        if (disposed) bmp.close();
        else levels.set(k, bmp);
        making.delete(k);
        return bmp;
      });
      making.set(k, p);
      return p;
    }

    const show = (k: number, bmp: ImageBitmap) => {
      base.value = {
        image: bmp,
        x: 0,
        y: 0,
        width: src.widthPx,
        height: src.heightPx,
        density: bmp.width / src.widthPx,
      };
    };

    async function ensure() {
      const k = levelFor(view.value.zoom);
      if (!levels.has(k) && k === 0) {
        progress.value = { label: 'Decoding the scan at full resolution…', fraction: null };
      }
      try {
        const bmp = await make(k);
        if (!disposed && levelFor(view.value.zoom) === k) show(k, bmp);
      } finally {
        if (k === 0) progress.value = null;
      }
    }

    const stop = watch(
      () => view.value.zoom,
      () => {
        clearTimeout(timer);
        timer = setTimeout(() => void ensure().catch(fail), levelDelayMs);
      },
    );

    return {
      /**
       * The first view. Without a scaled decoder it does not wait for the filtered halvings
       * (the first one reads all 70 Mpx): one bilinear resize straight to the level goes up
       * at once, and the filtered level replaces it a moment later.
       */
      first: async () => {
        const k = levelFor(view.value.zoom);
        if (decodeScaled || k === 0) return show(k, await make(k));
        progress.value = { label: 'Decoding the scan…', fraction: null };
        const full = await make(0);
        performance.mark('sheet:decoded');
        const quick = await createImageBitmap(full, {
          resizeWidth: dims(k).width,
          resizeHeight: dims(k).height,
          resizeQuality: 'low',
        });
        show(k, quick);
        void make(k).then((bmp) => {
          if (!disposed && base.value?.image === quick) show(k, bmp);
          quick.close();
        });
      },
      dispose: () => {
        disposed = true;
        stop();
        clearTimeout(timer);
        for (const b of levels.values()) b.close();
        levels.clear();
      },
    };
  }

  /** A JPEG decoded straight to a smaller size, where WebCodecs can (a secure context). */
  async function scaledJpegDecoder(blob: Blob) {
    if (typeof ImageDecoder === 'undefined') return null;
    if (!(await ImageDecoder.isTypeSupported('image/jpeg').catch(() => false))) return null;
    return async (width: number, height: number) => {
      const decoder = new ImageDecoder({
        type: 'image/jpeg',
        data: blob.stream(),
        desiredWidth: width,
        desiredHeight: height,
      });
      try {
        const { image } = await decoder.decode();
        try {
          return await createImageBitmap(image);
        } finally {
          image.close();
        }
      } finally {
        decoder.close();
      }
    };
  }

  // ---- PDF pages --------------------------------------------------------------------------

  async function pdfPage(blob: Blob, src: SheetImageSource, signal: AbortSignal) {
    const pdfjs = await import('pdfjs-dist');
    const { default: workerSrc } = await import('pdfjs-dist/build/pdf.worker.min.mjs?url');
    pdfjs.GlobalWorkerOptions.workerSrc = workerSrc;
    // A PDF may carry JavaScript and odd functions. This is pdf.js's display layer, which never
    // runs a document's scripts (that needs its viewer's scripting sandbox, not loaded here);
    // isEvalSupported: false also keeps it from compiling the PDF's functions with eval.
    const doc = await pdfjs.getDocument({
      data: new Uint8Array(await blob.arrayBuffer()),
      isEvalSupported: false,
      enableXfa: false,
    }).promise;
    if (signal.aborted) {
      void doc.destroy();
      return null;
    }
    const page = await doc.getPage(src.page);
    const frameScale = pdfFrameDpi / 72;
    const fullDensityCap = Math.sqrt(pdfMaxPixels / (src.widthPx * src.heightPx));
    let task: ReturnType<typeof page.render> | null = null;
    let timer: ReturnType<typeof setTimeout> | undefined;
    let disposed = false;
    let renderSeq = 0;

    async function render(
      density: number,
      rect: { x: number; y: number; width: number; height: number },
    ): Promise<SheetRaster | null> {
      const seq = ++renderSeq;
      task?.cancel();
      const viewport = page.getViewport({ scale: frameScale * density });
      const canvas = document.createElement('canvas');
      canvas.width = Math.max(1, Math.round(rect.width * density));
      canvas.height = Math.max(1, Math.round(rect.height * density));
      progress.value = {
        label: `Rendering the page at ${Math.round(density * pdfFrameDpi)} dpi…`,
        fraction: null,
      };
      task = page.render({
        canvas,
        viewport,
        transform: [1, 0, 0, 1, -rect.x * density, -rect.y * density],
        background: 'white',
      });
      try {
        await task.promise;
      } catch (err) {
        if ((err as { name?: string }).name === 'RenderingCancelledException') return null;
        throw err;
      } finally {
        if (seq === renderSeq) progress.value = null;
      }
      if (disposed || seq !== renderSeq) return null;
      return { image: canvas, ...rect, density };
    }

    const needed = () => Math.min(pdfMaxDensity, view.value.zoom * dpr());
    const baseDensity = () => Math.max(0.05, Math.min(fullDensityCap, needed() * 1.25));

    async function refresh() {
      const have = base.value?.density ?? 0;
      const need = needed();
      if (need <= fullDensityCap && (need > have * 1.3 || need < have / 3)) {
        // The whole page fits in one canvas at this zoom: re-render it, drop any detail.
        const r = await render(baseDensity(), {
          x: 0,
          y: 0,
          width: src.widthPx,
          height: src.heightPx,
        });
        if (r) {
          base.value = r;
          detail.value = null;
        }
        return;
      }
      if (need <= have * 1.3) {
        detail.value = null;
        return;
      }
      // Too fine for the whole page: render what is on screen (and a margin) at this density.
      const vis = visibleSheetRect(view.value, turn.value, screen.value);
      const d = detail.value;
      const inside =
        d &&
        d.density >= need / 1.3 &&
        d.density <= need * 2 &&
        vis.x >= d.x &&
        vis.y >= d.y &&
        vis.x + vis.width <= d.x + d.width &&
        vis.y + vis.height <= d.y + d.height;
      if (inside) return;
      const margin = 0.25;
      const x = Math.max(0, vis.x - vis.width * margin);
      const y = Math.max(0, vis.y - vis.height * margin);
      const rect = {
        x,
        y,
        width: Math.min(src.widthPx, vis.x + vis.width * (1 + margin)) - x,
        height: Math.min(src.heightPx, vis.y + vis.height * (1 + margin)) - y,
      };
      if (rect.width <= 0 || rect.height <= 0) return;
      const density = Math.min(need, Math.sqrt(pdfMaxPixels / (rect.width * rect.height)));
      const r = await render(density, rect);
      if (r) detail.value = r;
    }

    const stop = watch(
      () => [view.value.zoom, view.value.x, view.value.y, turn.value],
      () => {
        clearTimeout(timer);
        timer = setTimeout(() => void refresh().catch(fail), pdfDelayMs);
      },
    );

    return {
      first: async () => {
        const r = await render(baseDensity(), {
          x: 0,
          y: 0,
          width: src.widthPx,
          height: src.heightPx,
        });
        if (r) base.value = r;
      },
      dispose: () => {
        disposed = true;
        stop();
        clearTimeout(timer);
        task?.cancel();
        void doc.destroy();
      },
    };
  }

  function fail(err: unknown) {
    if ((err as { name?: string }).name === 'AbortError') return;
    error.value = err instanceof Error ? err.message : String(err);
    progress.value = null;
  }

  async function load(src: SheetImageSource) {
    abort?.abort();
    disposeKind?.();
    disposeKind = null;
    base.value = null;
    detail.value = null;
    error.value = '';
    const controller = new AbortController();
    abort = controller;
    startedAt.value = performance.now();
    progress.value = { label: 'Loading the sheet…', fraction: null };
    const blob = await fetchBytes(
      src.url,
      (fraction) => {
        progress.value = { label: 'Loading the sheet…', fraction };
      },
      controller.signal,
    );
    if (controller.signal.aborted) return;
    // Marks for the canvas benchmark's breakdown of the first view (cheap; kept).
    performance.mark('sheet:fetched');
    const mime = src.mimeType || blob.type;
    let kind: { first: () => Promise<void>; dispose: () => void } | null;
    if (mime === 'application/pdf') {
      kind = await pdfPage(blob, src, controller.signal);
    } else {
      const decodeFull = () => (/tiff/.test(mime) ? decodeTiff(blob) : createImageBitmap(blob));
      const scaled = mime === 'image/jpeg' ? await scaledJpegDecoder(blob) : null;
      kind = imagePyramid(src, { width: src.widthPx, height: src.heightPx }, decodeFull, scaled);
    }
    if (!kind || controller.signal.aborted) {
      kind?.dispose();
      return;
    }
    disposeKind = kind.dispose;
    await kind.first();
    performance.mark('sheet:first-raster');
    if (!controller.signal.aborted && mime !== 'application/pdf') progress.value = null;
    await nextFrame();
  }

  watch(
    source,
    (src, old) => {
      if (src && old && src.url === old.url && src.page === old.page) return;
      if (!src) {
        abort?.abort();
        disposeKind?.();
        disposeKind = null;
        base.value = detail.value = null;
        return;
      }
      load(src).catch(fail);
    },
    { immediate: true },
  );

  onBeforeUnmount(() => {
    abort?.abort();
    disposeKind?.();
  });

  return { base, detail, progress, error, startedAt };
}
