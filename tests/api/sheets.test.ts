import { readdirSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parseQuantity } from '@shared/engine';
import { upsertMembership } from '../../server/db/projects';
import { demoProjectName, seedDemo } from '../../server/demo/seed';
import { createTestApp, testHasher, TestClient, type TestApp } from '../helpers/app';
import { makeJpeg, makePdf, makePng, makePngClaiming, makeTiff } from '../helpers/sheet-files';

let t: TestApp;
let owner: TestClient;
let editor: TestClient;
let viewer: TestClient;
let stranger: TestClient;
let projectId: string;

beforeAll(async () => {
  t = await createTestApp();
  owner = new TestClient(t.app);
  editor = new TestClient(t.app);
  viewer = new TestClient(t.app);
  stranger = new TestClient(t.app);
  await owner.register('s.owner@example.com');
  const e = await editor.register('s.editor@example.com');
  const v = await viewer.register('s.viewer@example.com');
  await stranger.register('s.stranger@example.com');
  projectId = (
    await owner.post('/api/projects', { name: 'Sheet tests', displayUnit: 'in' }).expect(201)
  ).body.id;
  await upsertMembership(t.database.db, projectId, e.id, 'editor');
  await upsertMembership(t.database.db, projectId, v.id, 'viewer');
});
afterAll(() => t.close());

const url = (p = '', project = projectId) => `/api/projects/${project}${p}`;

function upload(client: TestClient, files: { bytes: Buffer; name: string }[], project = projectId) {
  let req = client.agent.post(url('/sheets', project)).set('X-CSRF-Token', client.csrf);
  for (const f of files) req = req.attach('file', f.bytes, { filename: f.name });
  return req;
}

/** Blobs in a local storage folder (everything but its temporary folder). */
function blobsIn(dir: string): string[] {
  return readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((d) => d.isFile() && !path.relative(dir, d.parentPath).startsWith('.tmp'))
    .map((d) => d.name);
}

async function countRows(app: TestApp, table: 'files' | 'sheets'): Promise<number> {
  const { rows } = await app.database.pool.query(`select count(*)::int as n from ${table}`);
  return rows[0].n;
}

describe('uploading sheets', () => {
  it('POST /sheets accepts a PDF and answers 201 with one sheet at 150 dpi', async () => {
    const res = await upload(editor, [{ bytes: await makePdf(1), name: 'frames.pdf' }]).expect(201);
    expect(res.body.sheets).toHaveLength(1);
    const [s] = res.body.sheets;
    expect(s).toMatchObject({
      projectId,
      title: 'frames',
      kind: 'drawing',
      page: 1,
      pageCount: 1,
      rotation: 0,
      straighten: 0,
      calibration: null,
      pins: [],
      measurements: [],
      revision: 0,
      file: { mimeType: 'application/pdf', originalName: 'frames.pdf' },
    });
    // A4 is 595.28 × 841.89 pt; × 150/72 at 150 dpi (ISO 216 size, PDF points of 1/72 in).
    expect(s.widthPx).toBeCloseTo((595.28 * 150) / 72, 1);
    expect(s.heightPx).toBeCloseTo((841.89 * 150) / 72, 1);
    expect(s.file.sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  it('POST /sheets accepts a PNG, a JPEG and a TIFF in one request, kind photo for the JPEG', async () => {
    const res = await upload(editor, [
      { bytes: makePng(40, 30), name: 'scan.png' },
      { bytes: makeJpeg(16, 8), name: 'engine.jpg' },
      { bytes: makeTiff(2, 3), name: 'plate.tif' },
    ]).expect(201);
    const got = res.body.sheets.map(
      (s: { file: { mimeType: string }; kind: string; widthPx: number; heightPx: number }) => [
        s.file.mimeType,
        s.kind,
        s.widthPx,
        s.heightPx,
      ],
    );
    expect(got).toEqual([
      ['image/png', 'drawing', 40, 30],
      ['image/jpeg', 'photo', 16, 8],
      ['image/tiff', 'drawing', 2, 3],
    ]);
  });

  it('a multi-page PDF becomes one sheet per page, each with its page number and title', async () => {
    const res = await upload(editor, [
      { bytes: await makePdf(3, { size: [720, 360] }), name: 'set.pdf' },
    ]).expect(201);
    const sheets = res.body.sheets;
    expect(sheets.map((s: { page: number }) => s.page)).toEqual([1, 2, 3]);
    expect(sheets.every((s: { pageCount: number }) => s.pageCount === 3)).toBe(true);
    expect(sheets.map((s: { title: string }) => s.title)).toEqual([
      'set, p. 1',
      'set, p. 2',
      'set, p. 3',
    ]);
    // 720 × 360 pt is 10 × 5 in: 1500 × 750 px at 150 dpi.
    expect(sheets[0].widthPx).toBeCloseTo(1500, 6);
    expect(sheets[0].heightPx).toBeCloseTo(750, 6);
    expect(new Set(sheets.map((s: { file: { sha256: string } }) => s.file.sha256)).size).toBe(1);
  });

  it('GET /sheets lists the sheets in upload order, pages in order', async () => {
    const res = await viewer.get(url('/sheets')).expect(200);
    const titles = res.body.sheets.map((s: { title: string }) => s.title);
    expect(titles.slice(0, 4)).toEqual(['frames', 'scan', 'engine', 'plate']);
    expect(titles.slice(-3)).toEqual(['set, p. 1', 'set, p. 2', 'set, p. 3']);
  });

  it('a text file named .png is refused with 415 naming the accepted kinds', async () => {
    const res = await upload(editor, [
      { bytes: Buffer.from('just some notes, not a picture\n'), name: 'notes.png' },
    ]);
    expect(res.status).toBe(415);
    expect(res.body.error.code).toBe('unsupported_media_type');
    expect(res.body.error.message).toContain('PDF, PNG, JPEG, TIFF');
    expect(res.body.error.details.file).toBe('notes.png');
  });

  it('a file of another real type (GIF) is refused with 415 whatever its name', async () => {
    const gif = Buffer.from('R0lGODlhAQABAIAAAAAAAP///yH5BAEAAAAALAAAAAABAAEAAAIBRAA7', 'base64');
    const res = await upload(editor, [{ bytes: gif, name: 'drawing.pdf' }]);
    expect(res.status).toBe(415);
    expect(res.body.error.details.detected).toBe('image/gif');
  });

  it('one refused file refuses the whole upload and stores nothing', async () => {
    const before = { files: await countRows(t, 'files'), sheets: await countRows(t, 'sheets') };
    const blobs = blobsIn(t.storageDir!).length;
    const res = await upload(editor, [
      { bytes: makePng(5, 5, 99), name: 'good.png' },
      { bytes: Buffer.from('%!PS-Adobe-3.0\n'), name: 'bad.tif' },
    ]);
    expect(res.status).toBe(415);
    expect(await countRows(t, 'files')).toBe(before.files);
    expect(await countRows(t, 'sheets')).toBe(before.sheets);
    expect(blobsIn(t.storageDir!)).toHaveLength(blobs);
    expect(readdirSync(t.uploadTempDir)).toEqual([]);
  });

  it('a truncated PDF is refused with 422 and nothing is stored', async () => {
    const pdf = await makePdf(2);
    const before = await countRows(t, 'files');
    const blobs = blobsIn(t.storageDir!).length;
    const res = await upload(editor, [
      { bytes: pdf.subarray(0, Math.floor(pdf.length * 0.6)), name: 'cut.pdf' },
    ]);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('unprocessable');
    expect(res.body.error.message).toContain('cut.pdf');
    expect(await countRows(t, 'files')).toBe(before);
    expect(blobsIn(t.storageDir!)).toHaveLength(blobs);
    expect(readdirSync(t.uploadTempDir)).toEqual([]);
  });

  it('a PDF whose end marker is there but whose body is broken is refused with 422', async () => {
    const broken = Buffer.from('%PDF-1.7\n1 0 obj\n<< /Type /Catalog >>\nendobj\n%%EOF\n');
    const res = await upload(editor, [{ bytes: broken, name: 'broken.pdf' }]);
    expect(res.status).toBe(422);
  });

  it('a truncated PNG, JPEG or TIFF is refused with 422', async () => {
    const png = makePng(20, 20);
    const jpg = makeJpeg(32, 32);
    const tif = makeTiff(4, 4);
    for (const [bytes, name] of [
      [png.subarray(0, png.length - 20), 'cut.png'],
      [jpg.subarray(0, Math.floor(jpg.length / 2)), 'cut.jpg'],
      [tif.subarray(0, tif.length - 3), 'cut.tif'],
    ] as const) {
      const res = await upload(editor, [{ bytes, name }]);
      expect(res.status, name).toBe(422);
    }
  });

  it('a JPEG whose EXIF orientation turns it a quarter reports the size browsers show', async () => {
    // APP1 "Exif" holding a big-endian TIFF IFD with Orientation (274) = 6 (CIPA DC-008 §4.6.4).
    const tiff = Buffer.alloc(26);
    tiff.write('MM', 0, 'latin1');
    tiff.writeUInt16BE(42, 2);
    tiff.writeUInt32BE(8, 4);
    tiff.writeUInt16BE(1, 8);
    tiff.writeUInt16BE(274, 10);
    tiff.writeUInt16BE(3, 12);
    tiff.writeUInt32BE(1, 14);
    tiff.writeUInt16BE(6, 18);
    const payload = Buffer.concat([Buffer.from('Exif\0\0', 'latin1'), tiff]);
    const app1 = Buffer.alloc(4);
    app1.writeUInt16BE(0xffe1, 0);
    app1.writeUInt16BE(payload.length + 2, 2);
    const plain = makeJpeg(16, 8);
    const turned = Buffer.concat([plain.subarray(0, 2), app1, payload, plain.subarray(2)]);
    const res = await upload(editor, [{ bytes: turned, name: 'upright.jpg' }]).expect(201);
    expect(res.body.sheets[0]).toMatchObject({ widthPx: 8, heightPx: 16, kind: 'photo' });
  });

  it('a PNG header claiming 50,000 × 50,000 px is refused with 422 before decoding', async () => {
    const bomb = makePngClaiming(50_000, 50_000);
    expect(bomb.length).toBeLessThan(100);
    const started = Date.now();
    const res = await upload(editor, [{ bytes: bomb, name: 'bomb.png' }]);
    expect(res.status).toBe(422);
    expect(res.body.error.details).toMatchObject({
      problem: 'too-many-pixels',
      widthPx: 50_000,
      heightPx: 50_000,
      maxPixels: 200_000_000,
    });
    expect(res.body.error.message).toMatch(/2500 megapixels/);
    expect(Date.now() - started).toBeLessThan(2000);
  });

  it('a 1 × 100,000 px image is accepted: 0.1 megapixels is under the limit', async () => {
    const res = await upload(editor, [{ bytes: makePng(1, 100_000), name: 'strip.png' }]).expect(
      201,
    );
    expect(res.body.sheets[0]).toMatchObject({ widthPx: 1, heightPx: 100_000 });
  });

  it('a path-traversal file name is kept only as its sanitised last part', async () => {
    const res = await upload(editor, [
      { bytes: makePng(3, 3, 1), name: '../../etc/passwd.png' },
    ]).expect(201);
    const sheet = res.body.sheets[0];
    expect(sheet.file.originalName).toBe('passwd.png');
    expect(sheet.title).toBe('passwd');
    const file = await viewer.get(url(`/sheets/${sheet.id}/file`)).expect(200);
    expect(file.headers['content-disposition']).toBe('inline; filename=passwd.png');
    expect(blobsIn(t.storageDir!)).not.toContain('passwd.png');
  });

  it('raw control characters in the part header are refused with 400 and nothing is stored', async () => {
    const before = await countRows(t, 'files');
    const res = await upload(editor, [{ bytes: makePng(3, 3, 2), name: 'frame\u0000plate.png' }]);
    expect(res.status).toBe(400);
    expect(await countRows(t, 'files')).toBe(before);
    expect(readdirSync(t.uploadTempDir)).toEqual([]);
  });

  it('NUL and control characters that arrive encoded (RFC 5987) are stripped from the name', async () => {
    const boundary = 'fairsheet-test-boundary';
    const body = Buffer.concat([
      Buffer.from(
        `--${boundary}\r\nContent-Disposition: form-data; name="file"; ` +
          `filename*=UTF-8''frame%00plate%07%1B.png\r\nContent-Type: image/png\r\n\r\n`,
      ),
      makePng(3, 3, 2),
      Buffer.from(`\r\n--${boundary}--\r\n`),
    ]);
    const res = await editor.agent
      .post(url('/sheets'))
      .set('X-CSRF-Token', editor.csrf)
      .set('Content-Type', `multipart/form-data; boundary=${boundary}`)
      .send(body)
      .expect(201);
    expect(res.body.sheets[0].file.originalName).toBe('frameplate.png');
  });

  it('a 300-character name is capped at 120 characters, keeping its extension', async () => {
    const res = await upload(editor, [
      { bytes: makePng(3, 3, 3), name: `${'x'.repeat(296)}.png` },
    ]).expect(201);
    const name = res.body.sheets[0].file.originalName as string;
    expect(Array.from(name)).toHaveLength(120);
    expect(name.endsWith('.png')).toBe(true);
    expect(res.body.sheets[0].title).toBe('x'.repeat(116));
  });

  it('a non-ASCII file name survives and is served in an RFC 6266 form', async () => {
    const res = await upload(editor, [
      { bytes: makePng(3, 3, 4), name: 'Rahmen – Blatt ½.png' },
    ]).expect(201);
    const sheet = res.body.sheets[0];
    expect(sheet.file.originalName).toBe('Rahmen – Blatt ½.png');
    const file = await viewer.get(url(`/sheets/${sheet.id}/file`)).expect(200);
    expect(file.headers['content-disposition']).toContain(
      "filename*=UTF-8''Rahmen%20%E2%80%93%20Blatt%20%C2%BD.png",
    );
  });

  it('the same file uploaded twice is stored once and makes two sheets', async () => {
    const bytes = makePng(7, 7, 42);
    const blobs = blobsIn(t.storageDir!).length;
    const a = (await upload(editor, [{ bytes, name: 'twice.png' }]).expect(201)).body.sheets[0];
    const b = (await upload(owner, [{ bytes, name: 'again.png' }]).expect(201)).body.sheets[0];
    expect(a.id).not.toBe(b.id);
    expect(a.file.sha256).toBe(b.file.sha256);
    expect(b.file.originalName).toBe('again.png');
    expect(blobsIn(t.storageDir!)).toHaveLength(blobs + 1);
    const { rows } = await t.database.pool.query(
      'select count(*)::int as n from files where sha256 = $1',
      [a.file.sha256],
    );
    expect(rows[0].n).toBe(1);
  });

  it('POST /sheets without a file answers 400', async () => {
    const res = await editor.agent
      .post(url('/sheets'))
      .set('X-CSRF-Token', editor.csrf)
      .field('note', 'no file here');
    expect(res.status).toBe(400);
    expect(res.body.error.message).toContain('"file"');
  });

  it('POST /sheets with the file in another field answers 400', async () => {
    const res = await editor.agent
      .post(url('/sheets'))
      .set('X-CSRF-Token', editor.csrf)
      .attach('upload', makePng(), { filename: 'a.png' });
    expect(res.status).toBe(400);
    expect(readdirSync(t.uploadTempDir)).toEqual([]);
  });
});

describe('the size limit', () => {
  let small: TestApp;
  let client: TestClient;
  let smallProject: string;

  beforeAll(async () => {
    small = await createTestApp({ uploadMaxBytes: 10_000 });
    client = new TestClient(small.app);
    await client.register('limit.owner@example.com');
    smallProject = (
      await client.post('/api/projects', { name: 'Limits', displayUnit: 'mm' }).expect(201)
    ).body.id;
  });
  afterAll(() => small.close());

  it('a file over UPLOAD_MAX_MB is refused with 413 and leaves nothing behind', async () => {
    const big = makePng(200, 200); // pngjs output of a ramp: well over 10 kB
    expect(big.length).toBeGreaterThan(10_000);
    const res = await client.agent
      .post(`/api/projects/${smallProject}/sheets`)
      .set('X-CSRF-Token', client.csrf)
      .attach('file', makePng(2, 2), { filename: 'small.png' })
      .attach('file', big, { filename: 'big.png' });
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('payload_too_large');
    expect(res.body.error.message).toContain('big.png');
    expect(res.body.error.message).toContain('9.8 KB');
    expect(readdirSync(small.uploadTempDir)).toEqual([]);
    expect(blobsIn(small.storageDir!)).toEqual([]);
    expect(await countRows(small, 'sheets')).toBe(0);
  });

  it('a file exactly at the limit is accepted', async () => {
    // A PNG padded with a private ancillary chunk to exactly 10,000 bytes.
    const base = makePng(2, 2);
    const pad = 10_000 - base.length - 12;
    const chunk = Buffer.alloc(12 + pad);
    chunk.writeUInt32BE(pad, 0);
    chunk.write('prVt', 4, 'latin1');
    const iend = base.length - 12;
    const exact = Buffer.concat([base.subarray(0, iend), chunk, base.subarray(iend)]);
    expect(exact.length).toBe(10_000);
    await client.agent
      .post(`/api/projects/${smallProject}/sheets`)
      .set('X-CSRF-Token', client.csrf)
      .attach('file', exact, { filename: 'exact.png' })
      .expect(201);
  });
});

describe('changing a sheet', () => {
  let sheet: { id: string; revision: number; widthPx: number };

  beforeAll(async () => {
    sheet = (
      await upload(editor, [{ bytes: makePng(1000, 600, 5), name: 'calib.png' }]).expect(201)
    ).body.sheets[0];
  });

  it('PATCH saves view settings, calibration and pins and bumps the revision', async () => {
    const res = await editor
      .patch(url(`/sheets/${sheet.id}`), {
        revision: 0,
        title: 'Frame plate, scanned',
        rotation: 90,
        straighten: -1.5,
        calibration: {
          method: 'two-point',
          reference: {
            a: { x: 100, y: 300 },
            b: { x: 900, y: 300 },
            length: '6 1/4',
            lengthMm: 158.75,
          },
        },
        pins: [
          { id: 'a', x: 100, y: 300, label: 'datum' },
          { id: 'b', x: 500, y: 300 },
        ],
        measurements: [{ id: 'm1', from: 'a', to: 'b', dimension: 'boss_to_datum' }],
      })
      .expect(200);
    expect(res.body).toMatchObject({
      revision: 1,
      title: 'Frame plate, scanned',
      rotation: 90,
      straighten: -1.5,
      pins: [
        { id: 'a', label: 'datum' },
        { id: 'b', label: '' },
      ],
    });
    // The contract's defaults are filled in.
    expect(res.body.calibration).toMatchObject({
      method: 'two-point',
      checks: [],
      modelScale: null,
      pickErrorPx: 2,
      reference: { tolMm: 0 },
    });
    const got = await viewer.get(url(`/sheets/${sheet.id}`)).expect(200);
    expect(got.body.revision).toBe(1);
    expect(got.body.measurements).toEqual([
      { id: 'm1', from: 'a', to: 'b', dimension: 'boss_to_datum' },
    ]);
  });

  it('PATCH with a stale revision answers 409 with the current sheet, and changes nothing', async () => {
    const res = await owner.patch(url(`/sheets/${sheet.id}`), { revision: 0, title: 'Mine' });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('conflict');
    expect(res.body.error.details.currentRevision).toBe(1);
    expect(res.body.error.details.sheet).toMatchObject({
      id: sheet.id,
      revision: 1,
      title: 'Frame plate, scanned',
    });
    expect((await viewer.get(url(`/sheets/${sheet.id}`))).body.title).toBe('Frame plate, scanned');
  });

  it('PATCH refuses a four-point calibration whose corners are collinear with 400', async () => {
    const res = await editor.patch(url(`/sheets/${sheet.id}`), {
      revision: 1,
      calibration: {
        method: 'four-point',
        corners: [
          { x: 0, y: 0 },
          { x: 100, y: 0 },
          { x: 200, y: 0 },
          { x: 300, y: 0 },
        ],
        width: '5 ft',
        widthMm: 1524,
        height: '3 ft',
        heightMm: 914.4,
      },
    });
    expect(res.status).toBe(400);
    expect(res.body.error.message).toMatch(/^The calibration cannot be used: /);
    expect(res.body.error.details.calibrationError).toMatch(/degenerate|folded/);
    expect((await viewer.get(url(`/sheets/${sheet.id}`))).body.revision).toBe(1);
  });

  it('PATCH refuses a model scale that does not parse with 400', async () => {
    const res = await editor.patch(url(`/sheets/${sheet.id}`), {
      revision: 1,
      calibration: {
        method: 'two-point',
        reference: { a: { x: 0, y: 0 }, b: { x: 10, y: 0 }, length: '1 in', lengthMm: 25.4 },
        modelScale: 'about a tenth',
      },
    });
    expect(res.status).toBe(400);
    expect(res.body.error.details.calibrationError).toBe('bad-scale');
  });

  it('PATCH refuses a measurement to a pin that is not on the sheet with 400', async () => {
    const res = await editor.patch(url(`/sheets/${sheet.id}`), {
      revision: 1,
      measurements: [{ id: 'm2', from: 'a', to: 'nowhere', dimension: 'x' }],
    });
    expect(res.status).toBe(400);
    expect(res.body.error.details.pin).toBe('nowhere');
  });

  it('PATCH refuses a body outside the contract (rotation 45) with 400 naming the field', async () => {
    const res = await editor.patch(url(`/sheets/${sheet.id}`), { revision: 1, rotation: 45 });
    expect(res.status).toBe(400);
    expect(res.body.error.details.fields.map((f: { path: string }) => f.path)).toContain(
      'rotation',
    );
  });

  it('PATCH /sheets/:id of another project answers 404', async () => {
    const other = (
      await owner.post('/api/projects', { name: 'Other', displayUnit: 'in' }).expect(201)
    ).body.id;
    const res = await owner.patch(url(`/sheets/${sheet.id}`, other), { revision: 1, title: 'x' });
    expect(res.status).toBe(404);
  });
});

describe('the file route', () => {
  let png: { id: string; file: { sha256: string } };
  let pdf: { id: string; file: { sha256: string; sizeBytes: number } };

  beforeAll(async () => {
    png = (await upload(editor, [{ bytes: makePng(9, 9, 9), name: 'served.png' }]).expect(201)).body
      .sheets[0];
    pdf = (
      await upload(editor, [
        { bytes: await makePdf(1, { javascript: 'app.alert("hello")' }), name: 'script.pdf' },
      ]).expect(201)
    ).body.sheets[0];
  });

  it('GET /file answers the bytes with their type, a strong ETag and private caching', async () => {
    const res = await viewer.get(url(`/sheets/${png.id}/file`)).expect(200);
    expect(res.headers['content-type']).toBe('image/png');
    expect(res.headers.etag).toBe(`"${png.file.sha256}"`);
    expect(res.headers['cache-control']).toMatch(/^private, max-age=\d+$/);
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toBe('sandbox');
    expect(Buffer.compare(res.body as Buffer, makePng(9, 9, 9))).toBe(0);
  });

  it('GET /file with If-None-Match of the ETag answers 304 with no body', async () => {
    const res = await viewer
      .get(url(`/sheets/${png.id}/file`))
      .set('If-None-Match', `"${png.file.sha256}"`);
    expect(res.status).toBe(304);
    expect(res.text ?? '').toBe('');
  });

  it('GET /file answers a byte range with 206', async () => {
    const res = await viewer
      .get(url(`/sheets/${pdf.id}/file`))
      .set('Range', 'bytes=0-7')
      .buffer(true)
      .parse((r, cb) => {
        const parts: Buffer[] = [];
        r.on('data', (c: Buffer) => parts.push(c));
        r.on('end', () => cb(null, Buffer.concat(parts)));
      });
    expect(res.status).toBe(206);
    expect(res.headers['content-range']).toBe(`bytes 0-7/${pdf.file.sizeBytes}`);
    expect((res.body as Buffer).toString('latin1')).toBe('%PDF-1.3');
  });

  it('a PDF with embedded JavaScript is stored and served as an application/pdf attachment in a sandbox', async () => {
    const res = await viewer.get(url(`/sheets/${pdf.id}/file`)).expect(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['content-disposition']).toBe('attachment; filename=script.pdf');
    expect(res.headers['content-security-policy']).toBe('sandbox');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
  });
});

describe('roles', () => {
  let sheetId: string;

  beforeAll(async () => {
    sheetId = (await upload(owner, [{ bytes: makeJpeg(), name: 'roles.jpg' }]).expect(201)).body
      .sheets[0].id;
  });

  it('a viewer can list, read and download sheets', async () => {
    await viewer.get(url('/sheets')).expect(200);
    await viewer.get(url(`/sheets/${sheetId}`)).expect(200);
    await viewer.get(url(`/sheets/${sheetId}/file`)).expect(200);
  });

  it('a viewer gets 403 for POST, PATCH and DELETE', async () => {
    expect((await upload(viewer, [{ bytes: makePng(), name: 'v.png' }])).status).toBe(403);
    expect((await viewer.patch(url(`/sheets/${sheetId}`), { revision: 0 })).status).toBe(403);
    expect((await viewer.delete(url(`/sheets/${sheetId}`))).status).toBe(403);
    expect(readdirSync(t.uploadTempDir)).toEqual([]);
  });

  it('a stranger gets 404 for the list, the sheet, its file and an upload', async () => {
    expect((await stranger.get(url('/sheets'))).status).toBe(404);
    expect((await stranger.get(url(`/sheets/${sheetId}`))).status).toBe(404);
    expect((await stranger.get(url(`/sheets/${sheetId}/file`))).status).toBe(404);
    expect((await upload(stranger, [{ bytes: makePng(), name: 's.png' }])).status).toBe(404);
  });

  it('signed out, every sheet route answers 401', async () => {
    const anon = new TestClient(t.app);
    await anon.refresh();
    expect((await anon.get(url('/sheets'))).status).toBe(401);
    expect((await anon.get(url(`/sheets/${sheetId}/file`))).status).toBe(401);
    expect((await upload(anon, [{ bytes: makePng(), name: 'a.png' }])).status).toBe(401);
  });

  it('an upload without the CSRF header is refused with 403', async () => {
    const res = await editor.agent
      .post(url('/sheets'))
      .attach('file', makePng(), { filename: 'x.png' });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('csrf');
  });

  it('a malformed sheet id answers 400', async () => {
    const res = await viewer.get(url('/sheets/not-a-uuid'));
    expect(res.status).toBe(400);
  });
});

describe('deleting sheets', () => {
  it('DELETE removes the sheet and its stored file when no other sheet uses it', async () => {
    const s = (await upload(editor, [{ bytes: makePng(6, 6, 77), name: 'gone.png' }]).expect(201))
      .body.sheets[0];
    expect(blobsIn(t.storageDir!)).toContain(s.file.sha256);
    await editor.delete(url(`/sheets/${s.id}`)).expect(204);
    expect(blobsIn(t.storageDir!)).not.toContain(s.file.sha256);
    await viewer.get(url(`/sheets/${s.id}`)).expect(404);
    const { rows } = await t.database.pool.query('select 1 from files where sha256 = $1', [
      s.file.sha256,
    ]);
    expect(rows).toHaveLength(0);
  });

  it('DELETE keeps the stored file while another sheet still uses it', async () => {
    const bytes = makePng(6, 6, 78);
    const a = (await upload(editor, [{ bytes, name: 'a.png' }]).expect(201)).body.sheets[0];
    const b = (await upload(editor, [{ bytes, name: 'b.png' }]).expect(201)).body.sheets[0];
    await editor.delete(url(`/sheets/${a.id}`)).expect(204);
    expect(blobsIn(t.storageDir!)).toContain(b.file.sha256);
    await viewer.get(url(`/sheets/${b.id}/file`)).expect(200);
    await editor.delete(url(`/sheets/${b.id}`)).expect(204);
    expect(blobsIn(t.storageDir!)).not.toContain(b.file.sha256);
  });

  it('DELETE of a sheet that is not there answers 404', async () => {
    const res = await editor.delete(url('/sheets/00000000-0000-4000-8000-000000000000'));
    expect(res.status).toBe(404);
  });
});

describe('deleting a project', () => {
  it('removes its stored files at once, and keeps one another project still uses', async () => {
    const newProject = async (name: string) =>
      (await owner.post('/api/projects', { name, displayUnit: 'mm' }).expect(201)).body
        .id as string;
    const doomed = await newProject('Doomed');
    const kept = await newProject('Kept');
    const own = makePng(6, 6, 91);
    const shared = makePng(6, 6, 92);
    const [a, b] = (
      await upload(
        owner,
        [
          { bytes: own, name: 'own.png' },
          { bytes: shared, name: 'shared.png' },
        ],
        doomed,
      ).expect(201)
    ).body.sheets;
    const other = (await upload(owner, [{ bytes: shared, name: 'shared.png' }], kept).expect(201))
      .body.sheets[0];
    expect(blobsIn(t.storageDir!)).toEqual(
      expect.arrayContaining([a.file.sha256, b.file.sha256]),
    );

    await owner.delete(url('', doomed)).expect(204);
    // At once: no restart (and its sweep) in between.
    expect(blobsIn(t.storageDir!)).not.toContain(a.file.sha256);
    expect(blobsIn(t.storageDir!)).toContain(other.file.sha256);
    const { rows } = await t.database.pool.query(
      'select sha256 from files where sha256 = any($1)',
      [[a.file.sha256, b.file.sha256]],
    );
    expect(rows).toEqual([{ sha256: other.file.sha256 }]);
    const served = await owner.get(url(`/sheets/${other.id}/file`, kept)).expect(200);
    expect(Buffer.compare(served.body as Buffer, shared)).toBe(0);
  });
});

describe('the demo sheets', () => {
  let demo: TestApp;

  beforeAll(async () => {
    demo = await createTestApp();
  });
  afterAll(() => demo.close());

  it('seeding makes the two drawing pages and the photo, calibrated, with pins and the wheelbase measurement', async () => {
    const started = Date.now();
    expect(await seedDemo(demo.database.db, testHasher, demo.storage)).toBe(true);
    expect(Date.now() - started).toBeLessThan(8000);
    const c = new TestClient(demo.app);
    expect((await c.login('builder@example.com', 'fairsheet-demo')).status).toBe(200);
    const project = (await c.get('/api/projects')).body.projects.find(
      (p: { name: string }) => p.name === demoProjectName,
    );
    const sheets = (await c.get(`/api/projects/${project.id}/sheets`).expect(200)).body.sheets;
    expect(sheets.map((s: { title: string; kind: string }) => [s.title, s.kind])).toEqual([
      ['K-1 sheet 1 — frame plate, side view', 'drawing'],
      ['K-1 sheet 2 — hornblock and horn stay', 'drawing'],
      ['Prototype photo (stand-in) — engine side', 'photo'],
    ]);
    const [frame, details, photo] = sheets;
    expect(frame).toMatchObject({ page: 1, pageCount: 2, calibration: { method: 'two-point' } });
    expect(details).toMatchObject({ page: 2, pageCount: 2 });
    // 30 1/4 in drawn at 4 in = 1 ft is 10 1/12 in on paper: 1512.5 px at 150 dpi.
    const ref = frame.calibration.reference;
    expect(Math.hypot(ref.b.x - ref.a.x, ref.b.y - ref.a.y)).toBeCloseTo(1512.5, 6);
    expect(ref.lengthMm).toBeCloseTo(768.35, 9);
    expect(photo.widthPx).toBeLessThanOrEqual(2000);
    expect(photo.calibration).toMatchObject({ method: 'four-point', modelScale: '1:11.3' });
    expect(parseQuantity(photo.calibration.width).value).toBeCloseTo(photo.calibration.widthMm, 9);
    expect(photo.measurements).toEqual([
      {
        id: 'ph-wheelbase',
        from: 'ph-hub-1',
        to: 'ph-hub-2',
        dimension: 'frame_photo_wheelbase',
      },
    ]);
    expect(photo.pins.length).toBeGreaterThanOrEqual(4);
    const file = await c.get(`/api/projects/${project.id}/sheets/${photo.id}/file`).expect(200);
    expect(file.headers['content-type']).toBe('image/jpeg');
  });

  it('seeding again creates nothing more', async () => {
    expect(await seedDemo(demo.database.db, testHasher, demo.storage)).toBe(false);
    expect(await countRows(demo, 'sheets')).toBe(3);
    expect(await countRows(demo, 'files')).toBe(2);
  });
});
