/// <reference lib="webworker" />
/**
 * Decodes the first page of a TIFF scan off the main thread (TIFF is the one accepted format
 * the browser cannot decode itself) and hands back an ImageBitmap, transferred, not copied.
 */
import * as UTIF from 'utif2';

export type TiffAnswer =
  { ok: true; bitmap: ImageBitmap; width: number; height: number } | { ok: false; message: string };

self.onmessage = async (e: MessageEvent<ArrayBuffer>) => {
  try {
    const buffer = e.data;
    const ifds = UTIF.decode(buffer);
    const ifd = ifds.find((d) => Number((d.t256 as number[] | undefined)?.[0] ?? 0) > 0) ?? ifds[0];
    if (!ifd) throw new Error('The TIFF file holds no image');
    UTIF.decodeImage(buffer, ifd);
    const rgba = UTIF.toRGBA8(ifd);
    // A view on the decoder's buffer, not a copy: a 70 Mpx scan is 280 MB of RGBA.
    const pixels = new Uint8ClampedArray(
      rgba.buffer as ArrayBuffer,
      rgba.byteOffset,
      ifd.width * ifd.height * 4,
    );
    const bitmap = await createImageBitmap(new ImageData(pixels, ifd.width, ifd.height));
    const answer: TiffAnswer = { ok: true, bitmap, width: ifd.width, height: ifd.height };
    (self as unknown as DedicatedWorkerGlobalScope).postMessage(answer, [bitmap]);
  } catch (err) {
    const answer: TiffAnswer = {
      ok: false,
      message: `This TIFF could not be decoded: ${err instanceof Error ? err.message : String(err)}`,
    };
    self.postMessage(answer);
  }
};
