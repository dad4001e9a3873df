// Small files of every accepted kind, built in the test: no fixtures on disk.
import jpeg from 'jpeg-js';
import PDFDocument from 'pdfkit';
import { PNG } from 'pngjs';

/**
 * A PDF of `pages` pages (A4 portrait unless told), each with a line of text, or with what
 * `draw` puts on it (in PDF points from the top left, 72 to the inch).
 */
export async function makePdf(
  pages = 1,
  options: {
    size?: [number, number];
    javascript?: string;
    draw?: (doc: PDFKit.PDFDocument, page: number) => void;
  } = {},
): Promise<Buffer> {
  const doc = new PDFDocument({ size: options.size ?? 'A4', margin: 36, autoFirstPage: false });
  const chunks: Buffer[] = [];
  doc.on('data', (c: Buffer) => chunks.push(c));
  const done = new Promise<void>((resolve) => doc.on('end', () => resolve()));
  for (let n = 1; n <= pages; n++) {
    doc.addPage();
    if (options.draw) {
      options.draw(doc, n);
      continue;
    }
    doc.fontSize(14).text(`Test sheet, page ${n}`);
    doc.rect(72, 120, 200, 100).stroke();
  }
  if (options.javascript) {
    // An OpenAction that a PDF viewer with scripting would run on opening.
    const action = doc.ref({ S: 'JavaScript', JS: new String(options.javascript) });
    (action as unknown as { end(): void }).end();
    (doc as unknown as { _root: { data: Record<string, unknown> } })._root.data.OpenAction = action;
  }
  doc.end();
  await done;
  return Buffer.concat(chunks);
}

/** A real PNG (pngjs) of the given size, a grey ramp. */
export function makePng(width = 4, height = 3, seed = 0): Buffer {
  const png = new PNG({ width, height });
  for (let i = 0; i < width * height; i++) {
    png.data.set([(i * 7 + seed) % 256, (i * 3) % 256, 200, 255], i * 4);
  }
  return PNG.sync.write(png);
}

/** A real baseline JPEG (jpeg-js). */
export function makeJpeg(width = 8, height = 8): Buffer {
  const data = Buffer.alloc(width * height * 4, 128);
  return Buffer.from(jpeg.encode({ data, width, height }, 80).data);
}

/**
 * A minimal valid TIFF written by hand (TIFF 6.0 §2, baseline greyscale): little-endian, one
 * uncompressed 8-bit strip.
 */
export function makeTiff(width = 2, height = 2): Buffer {
  const entries: [tag: number, type: number, value: number][] = [
    [256, 3, width], // ImageWidth
    [257, 3, height], // ImageLength
    [258, 3, 8], // BitsPerSample
    [259, 3, 1], // Compression: none
    [262, 3, 1], // PhotometricInterpretation: black is zero
    [273, 4, 0], // StripOffsets (filled below)
    [277, 3, 1], // SamplesPerPixel
    [278, 3, height], // RowsPerStrip
    [279, 4, width * height], // StripByteCounts
  ];
  const ifdSize = 2 + entries.length * 12 + 4;
  const dataAt = 8 + ifdSize;
  const buf = Buffer.alloc(dataAt + width * height, 0);
  buf.write('II', 0, 'latin1');
  buf.writeUInt16LE(42, 2);
  buf.writeUInt32LE(8, 4);
  buf.writeUInt16LE(entries.length, 8);
  entries.forEach(([tag, type, value], i) => {
    const p = 10 + i * 12;
    buf.writeUInt16LE(tag, p);
    buf.writeUInt16LE(type, p + 2);
    buf.writeUInt32LE(1, p + 4);
    const v = tag === 273 ? dataAt : value;
    if (type === 3) buf.writeUInt16LE(v, p + 8);
    else buf.writeUInt32LE(v, p + 8);
  });
  buf.writeUInt32LE(0, 8 + 2 + entries.length * 12); // no next IFD
  for (let i = 0; i < width * height; i++) buf[dataAt + i] = (i * 60) % 256;
  return buf;
}

function crc32(bytes: Buffer): number {
  let c = ~0;
  for (const b of bytes) {
    c ^= b;
    for (let k = 0; k < 8; k++) c = (c >>> 1) ^ (0xedb88320 & -(c & 1));
  }
  return ~c >>> 0;
}

function chunk(type: string, data: Buffer): Buffer {
  const head = Buffer.alloc(8);
  head.writeUInt32BE(data.length, 0);
  head.write(type, 4, 'latin1');
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(Buffer.concat([head.subarray(4), data])));
  return Buffer.concat([head, data, crc]);
}

/**
 * A structurally complete PNG whose header claims `width` × `height` but whose data is a few
 * bytes: what a decompression bomb looks like before anything decodes it.
 */
export function makePngClaiming(width: number, height: number): Buffer {
  const ihdr = Buffer.alloc(13);
  ihdr.writeUInt32BE(width, 0);
  ihdr.writeUInt32BE(height, 4);
  ihdr.set([8, 2, 0, 0, 0], 8); // 8-bit RGB, deflate, no filter, no interlace
  return Buffer.concat([
    Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
    chunk('IHDR', ihdr),
    chunk('IDAT', Buffer.from([0x78, 0x9c, 0x03, 0x00, 0x00, 0x00, 0x00, 0x01])),
    chunk('IEND', Buffer.alloc(0)),
  ]);
}
