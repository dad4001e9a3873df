// Uploads meant to mislead or to hurt: bytes that say one thing and a name or a Content-Type
// that says another, broken and oversized files, scripts inside PDFs and hostile file names.
// What tests/api/sheets.test.ts already covers is not repeated here. Every refusal must be a
// 4xx JSON answer that names the problem, and leave nothing behind: no row in `files` or
// `sheets`, no file in the storage folder (its temporary folder included), an empty upload
// staging folder.
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';
import { makeJpeg, makePdf, makePng, makePngClaiming, makeTiff } from '../helpers/sheet-files';

let t: TestApp;
let editor: TestClient;
let projectId: string;

beforeAll(async () => {
  t = await createTestApp();
  editor = new TestClient(t.app);
  await editor.register('abuse.editor@example.com');
  projectId = (
    await editor.post('/api/projects', { name: 'Upload abuse', displayUnit: 'in' }).expect(201)
  ).body.id;
});
afterAll(() => t.close());

const url = (p = '') => `/api/projects/${projectId}${p}`;

interface Part {
  bytes: Buffer;
  name: string;
  contentType?: string;
}

function upload(files: Part[]) {
  let req = editor.agent.post(url('/sheets')).set('X-CSRF-Token', editor.csrf);
  for (const f of files) {
    req = req.attach('file', f.bytes, { filename: f.name, contentType: f.contentType });
  }
  return req;
}

/** A download's bytes as they came, whatever the Content-Type. */
const raw = (res: import('superagent').Response, cb: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};

/** Every file under a folder, hidden ones (the storage's .tmp) included. */
function filesUnder(dir: string): string[] {
  return readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((d) => d.isFile())
    .map((d) => path.relative(dir, path.join(d.parentPath, d.name)))
    .sort();
}

async function countRows(table: 'files' | 'sheets'): Promise<number> {
  const { rows } = await t.database.pool.query(`select count(*)::int as n from ${table}`);
  return rows[0].n;
}

async function snapshot() {
  return {
    files: await countRows('files'),
    sheets: await countRows('sheets'),
    stored: filesUnder(t.storageDir!),
  };
}

/**
 * Uploads, and checks the answer is the refusal expected, in JSON, naming the file (as it is
 * shown: sanitised) and the problem, and that nothing of it remains anywhere.
 */
async function expectRefused(
  files: Part[],
  want: { status: number; code: string; message: RegExp; problem?: string },
) {
  const before = await snapshot();
  const res = await upload(files);
  expect(res.status, JSON.stringify(res.body)).toBe(want.status);
  expect(res.headers['content-type']).toMatch(/^application\/json/);
  expect(res.body.error.code).toBe(want.code);
  expect(res.body.error.message).toMatch(want.message);
  if (want.problem) expect(res.body.error.details.problem).toBe(want.problem);
  expect(await snapshot()).toEqual(before);
  expect(readdirSync(t.uploadTempDir)).toEqual([]);
  return res.body.error;
}

/**
 * The staging folder's files, once the route has removed them: after a 201 it removes them
 * just after answering (a refusal removes them before), so give it a moment.
 */
async function stagedAfterAnswer(): Promise<string[]> {
  for (let i = 0; i < 100 && readdirSync(t.uploadTempDir).length; i++) {
    await new Promise((r) => setTimeout(r, 20));
  }
  return readdirSync(t.uploadTempDir);
}

async function accepted(files: Part[]) {
  const res = await upload(files);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  expect(await stagedAfterAnswer()).toEqual([]);
  return res.body.sheets as Array<{
    id: string;
    title: string;
    kind: string;
    widthPx: number;
    heightPx: number;
    file: { mimeType: string; originalName: string; sha256: string; sizeBytes: number };
  }>;
}

/** Uploads one file, expects it accepted as one sheet and answers that sheet. */
async function acceptedOne(file: Part) {
  const sheets = await accepted([file]);
  expect(sheets).toHaveLength(1);
  return sheets[0]!;
}

/** The JPEG from makeJpeg with its frame header (SOF0) claiming another size. */
function jpegClaiming(width: number, height: number): Buffer {
  const jpg = Buffer.from(makeJpeg(8, 8));
  const sof = jpg.indexOf(Buffer.from([0xff, 0xc0]));
  expect(sof).toBeGreaterThan(0);
  // ITU-T T.81 §B.2.2: length (2), precision (1), height (2), width (2).
  jpg.writeUInt16BE(height, sof + 5);
  jpg.writeUInt16BE(width, sof + 7);
  return jpg;
}

/** The TIFF from makeTiff with its ImageWidth and ImageLength tags claiming another size. */
function tiffClaiming(width: number, height: number): Buffer {
  const tif = Buffer.from(makeTiff(2, 2));
  const count = tif.readUInt16LE(8);
  for (let i = 0; i < count; i++) {
    const p = 10 + i * 12;
    const tag = tif.readUInt16LE(p);
    if (tag === 256) tif.writeUInt16LE(width, p + 8);
    if (tag === 257) tif.writeUInt16LE(height, p + 8);
  }
  return tif;
}

describe('bytes that disagree with the name and the Content-Type', () => {
  // Accepted by the bytes: the type is sniffed from the content (file-type), the name and the
  // part's Content-Type are only kept or ignored. The file is then served as what it is.
  it('PNG bytes named drawing.pdf and sent as application/pdf are stored and served as a PNG', async () => {
    const png = makePng(12, 7, 31);
    const sheet = await acceptedOne({
      bytes: png,
      name: 'drawing.pdf',
      contentType: 'application/pdf',
    });
    expect(sheet).toMatchObject({ kind: 'drawing', widthPx: 12, heightPx: 7, title: 'drawing' });
    expect(sheet.file).toMatchObject({ mimeType: 'image/png', originalName: 'drawing.pdf' });
    const file = await editor
      .get(url(`/sheets/${sheet.id}/file`))
      .buffer(true)
      .parse(raw);
    expect(file.status).toBe(200);
    expect(file.headers['content-type']).toBe('image/png');
    expect(file.headers['x-content-type-options']).toBe('nosniff');
    expect(file.headers['content-disposition']).toBe('inline; filename=drawing.png');
    expect(Buffer.compare(file.body as Buffer, png)).toBe(0);
  });

  it('PDF bytes named photo.jpg and sent as image/jpeg are stored as a PDF and served as a download', async () => {
    const pdf = await makePdf(1, { size: [360, 360] });
    const sheet = await acceptedOne({ bytes: pdf, name: 'photo.jpg', contentType: 'image/jpeg' });
    // 360 pt is 5 in: 750 px at 150 dpi.
    expect(sheet).toMatchObject({ kind: 'drawing', widthPx: 750, heightPx: 750 });
    expect(sheet.file.mimeType).toBe('application/pdf');
    const file = await editor.get(url(`/sheets/${sheet.id}/file`));
    expect(file.headers['content-type']).toBe('application/pdf');
    // The kept name stays as sent; the download is named for what it is.
    expect(file.headers['content-disposition']).toBe('attachment; filename=photo.pdf');
  });

  it('JPEG bytes named scan.tif and sent as text/plain are a photo, by their bytes', async () => {
    const sheet = await acceptedOne({
      bytes: makeJpeg(10, 6),
      name: 'scan.tif',
      contentType: 'text/plain',
    });
    expect(sheet).toMatchObject({ kind: 'photo', widthPx: 10, heightPx: 6 });
    expect(sheet.file.mimeType).toBe('image/jpeg');
  });

  it('an HTML page named drawing.png and sent as image/png is refused with 415, whatever it claims', async () => {
    const page = Buffer.from('<!doctype html><html><script>alert(document.cookie)</script></html>');
    const error = await expectRefused(
      [{ bytes: page, name: 'drawing.png', contentType: 'image/png' }],
      {
        status: 415,
        code: 'unsupported_media_type',
        message: /“drawing\.png” is not a PDF or an image we can use .*PDF, PNG, JPEG, TIFF/,
        problem: 'unsupported',
      },
    );
    expect(error.details.accepted).toEqual([
      'application/pdf',
      'image/png',
      'image/jpeg',
      'image/tiff',
    ]);
  });
});

describe('truncated and broken files', () => {
  it('a PDF cut short anywhere is refused (422, or 415 when too little is left to tell) and leaves nothing', async () => {
    const pdf = await makePdf(2);
    const eof = pdf.lastIndexOf('%%EOF');
    // From the first three bytes to just before the end marker, and a cut through the marker.
    const cuts = [3, 9, 100, 400, Math.floor(pdf.length / 3), Math.floor(pdf.length / 2), eof - 1];
    cuts.push(eof + 3);
    for (const cut of cuts) {
      const bytes = pdf.subarray(0, cut);
      if (cut < 4) {
        await expectRefused([{ bytes, name: `cut-${cut}.pdf` }], {
          status: 415,
          code: 'unsupported_media_type',
          message: new RegExp(`“cut-${cut}\\.pdf” is not a PDF`),
          problem: 'unsupported',
        });
      } else {
        await expectRefused([{ bytes, name: `cut-${cut}.pdf` }], {
          status: 422,
          code: 'unprocessable',
          message: new RegExp(`^“cut-${cut}\\.pdf”: The PDF (file is cut short|cannot be opened)`),
          problem: 'unreadable',
        });
      }
    }
  });

  it('a multipart body that ends in the middle of the file is refused with 400 and its part is removed', async () => {
    const boundary = 'fairsheet-cut-boundary';
    const body = Buffer.concat([
      Buffer.from(
        `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="half.png"\r\n` +
          'Content-Type: image/png\r\n\r\n',
      ),
      makePng(50, 50, 9).subarray(0, 200),
    ]);
    const before = await snapshot();
    const res = await editor.agent
      .post(url('/sheets'))
      .set('X-CSRF-Token', editor.csrf)
      .set('Content-Type', `multipart/form-data; boundary=${boundary}`)
      .send(body);
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/^The upload was cut short or malformed/);
    expect(await snapshot()).toEqual(before);
    expect(readdirSync(t.uploadTempDir)).toEqual([]);
  });

  it('image bytes sent as the raw body, not as a form, are refused with 400 asking for the field', async () => {
    const before = await snapshot();
    const res = await editor.agent
      .post(url('/sheets'))
      .set('X-CSRF-Token', editor.csrf)
      .set('Content-Type', 'image/png')
      .send(makePng(4, 4, 3));
    expect(res.status).toBe(400);
    expect(res.body.error.message).toContain('"file"');
    expect(await snapshot()).toEqual(before);
  });
});

describe('a PDF with JavaScript in it', () => {
  const script = 'app.alert("run on open")';
  let pdf: Buffer;
  let sheet: { id: string; file: { sizeBytes: number } };

  beforeAll(async () => {
    pdf = await makePdf(1, { javascript: script });
    expect(pdf.includes('/S /JavaScript')).toBe(true);
    sheet = await acceptedOne({ bytes: pdf, name: 'scripted.pdf' });
  });

  it('is stored byte for byte: the app keeps the file, it does not run or rewrite it', async () => {
    const res = await editor
      .get(url(`/sheets/${sheet.id}/file`))
      .buffer(true)
      .parse(raw);
    expect(Buffer.compare(res.body as Buffer, pdf)).toBe(0);
    expect((res.body as Buffer).includes('app.alert')).toBe(true);
  });

  it('every way of fetching it (whole, a byte range as pdf.js asks, HEAD) carries the headers that stop a browser running it', async () => {
    const file = url(`/sheets/${sheet.id}/file`);
    const answers = [
      await editor.get(file),
      await editor.get(file).set('Range', 'bytes=0-99').buffer(true).parse(raw),
      await editor.agent.head(file),
    ];
    expect(answers.map((r) => r.status)).toEqual([200, 206, 200]);
    for (const res of answers) {
      // A download, not a page; never sniffed into something else; if opened anyway, a sandbox
      // without scripts and an origin of its own; not embeddable by other sites.
      expect(res.headers['content-type']).toBe('application/pdf');
      expect(res.headers['content-disposition']).toBe('attachment; filename=scripted.pdf');
      expect(res.headers['x-content-type-options']).toBe('nosniff');
      expect(res.headers['content-security-policy']).toBe('sandbox');
      expect(res.headers['cross-origin-resource-policy']).toBe('same-origin');
    }
  });

  it('the app’s own pages allow scripts from the app only: no inline script, no eval, no plugins', async () => {
    const res = await editor.get('/api/auth/session').expect(200);
    const csp = Object.fromEntries(
      String(res.headers['content-security-policy'])
        .split(';')
        .map((d) => d.trim().split(/\s+/))
        .map(([name, ...values]) => [name, values]),
    );
    expect(csp['script-src']).toEqual(["'self'", "'wasm-unsafe-eval'"]);
    expect(csp['object-src']).toEqual(["'none'"]);
    expect(csp['frame-ancestors']).toEqual(["'none'"]);
  });

  it('the client opens PDFs with pdf.js’s display layer only, without eval and without its scripting sandbox', () => {
    // pdf.js runs a document's JavaScript only through its viewer's scripting manager and
    // sandbox (pdfjs-dist/web/*, build/pdf.sandbox*); the client must load neither, and each
    // getDocument call must turn eval off.
    const sources = readdirSync('src', { recursive: true, withFileTypes: true })
      .filter((d) => d.isFile() && /\.(ts|vue)$/.test(d.name))
      .map((d) => path.join(d.parentPath, d.name));
    const calls: string[] = [];
    for (const file of sources) {
      const text = readFileSync(file, 'utf8');
      expect(text, file).not.toMatch(/pdfjs-dist\/web\/|pdf\.sandbox|enableScripting/);
      for (const m of text.matchAll(/getDocument\(([\s\S]*?)\)\.promise/g)) calls.push(m[1]!);
    }
    expect(calls.length).toBeGreaterThan(0);
    for (const options of calls) expect(options).toMatch(/isEvalSupported:\s*false/);
  });
});

describe('sizes meant to exhaust memory', () => {
  it('headers claiming 50,000 × 50,000 px (PNG, JPEG, TIFF) or a 50,000 px square PDF page are refused with 422 before decoding, leaving nothing', async () => {
    // 24,000 pt at 150 dpi is 50,000 px (PDF points are 1/72 in).
    const hugePage = await makePdf(1, { size: [24_000, 24_000] });
    for (const [bytes, name] of [
      [makePngClaiming(50_000, 50_000), 'bomb.png'],
      [jpegClaiming(50_000, 50_000), 'bomb.jpg'],
      [tiffClaiming(50_000, 50_000), 'bomb.tif'],
      [hugePage, 'poster.pdf'],
    ] as const) {
      expect(bytes.length, name).toBeLessThan(5_000);
      const error = await expectRefused([{ bytes, name }], {
        status: 422,
        code: 'unprocessable',
        message: new RegExp(
          `^“${name.replace('.', '\\.')}”: .* is 50000 × 50000 px \\(2500 megapixels\\); the limit is 200 megapixels\\.$`,
        ),
        problem: 'too-many-pixels',
      });
      expect(error.details).toMatchObject({ widthPx: 50_000, heightPx: 50_000 });
      expect(error.message).toContain(name.endsWith('.pdf') ? 'The page at 150 dpi' : 'The image');
    }
  });

  it('a 1 px wide strip is accepted as a JPEG and a TIFF too (1 × 65,000, the most their headers hold is 65,535)', async () => {
    const sheets = await accepted([
      { bytes: makeJpeg(1, 65_000), name: 'strip.jpg' },
      { bytes: makeTiff(1, 65_000), name: 'strip.tif' },
    ]);
    expect(sheets.map((s) => [s.file.mimeType, s.widthPx, s.heightPx])).toEqual([
      ['image/jpeg', 1, 65_000],
      ['image/tiff', 1, 65_000],
    ]);
  });
});

describe('hostile file names', () => {
  it('a Windows path keeps only its last part', async () => {
    const sheet = await acceptedOne({
      bytes: makePng(3, 3, 61),
      name: '..\\..\\windows\\system32\\frame.png',
    });
    expect(sheet.file.originalName).toBe('frame.png');
    expect(filesUnder(t.storageDir!).some((f) => f.includes('frame'))).toBe(false);
  });

  it('a name that is only dots and spaces after its last slash becomes “untitled”', async () => {
    const sheet = await acceptedOne({ bytes: makePng(3, 3, 62), name: 'sheets/ . . ' });
    expect(sheet.file.originalName).toBe('untitled');
    expect(sheet.title).toBe('untitled');
  });

  it('a file named only “../..” is kept as “untitled”, not dropped for want of a name', async () => {
    const sheet = await acceptedOne({ bytes: makePng(3, 3, 65), name: '../..' });
    expect(sheet.file.originalName).toBe('untitled');
    expect(sheet.title).toBe('untitled');
  });

  it('300 characters of four-byte characters are capped at 120 whole characters with the extension', async () => {
    const name = `${'🚂'.repeat(296)}.png`;
    expect(Buffer.byteLength(name)).toBeGreaterThan(1000);
    const sheet = await acceptedOne({ bytes: makePng(3, 3, 63), name });
    const kept = Array.from(sheet.file.originalName);
    expect(kept).toHaveLength(120);
    expect(kept.slice(0, 116).every((c) => c === '🚂')).toBe(true);
    expect(sheet.file.originalName.endsWith('.png')).toBe(true);
    const file = await editor.get(url(`/sheets/${sheet.id}/file`));
    expect(file.headers['content-disposition']).toMatch(
      /^inline; filename="?\S+"?; filename\*=UTF-8''(%F0%9F%9A%82){116}\.png$/,
    );
  });

  it('bidirectional overrides that would make a name read backwards are removed', async () => {
    const sheet = await acceptedOne({ bytes: makePng(3, 3, 64), name: 'plate\u202egnp.exe' });
    expect(sheet.file.originalName).toBe('plategnp.exe');
  });

  it('a refused file with a path and a NUL in its name is named in the refusal as it would be kept', async () => {
    const boundary = 'fairsheet-name-boundary';
    const body = Buffer.concat([
      Buffer.from(
        `--${boundary}\r\nContent-Disposition: form-data; name="file"; ` +
          `filename*=UTF-8''..%2F..%2Fetc%2Fnot%00es.png\r\nContent-Type: image/png\r\n\r\n`,
      ),
      Buffer.from('plain notes, not a picture\n'),
      Buffer.from(`\r\n--${boundary}--\r\n`),
    ]);
    const before = await snapshot();
    const res = await editor.agent
      .post(url('/sheets'))
      .set('X-CSRF-Token', editor.csrf)
      .set('Content-Type', `multipart/form-data; boundary=${boundary}`)
      .send(body);
    expect(res.status).toBe(415);
    expect(res.body.error.message).toMatch(/^“notes\.png” is not a PDF or an image/);
    expect(res.body.error.details.file).toBe('notes.png');
    expect(JSON.stringify(res.body)).not.toMatch(/\\u0000|\.\.\//);
    expect(await snapshot()).toEqual(before);
    expect(readdirSync(t.uploadTempDir)).toEqual([]);
  });
});
