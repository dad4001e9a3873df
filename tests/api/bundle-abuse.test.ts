// Bundles meant to hurt: a zip bomb, a manifest that lies about its files, a directory that
// lies about an entry's size, a model larger than a save accepts, a thousand entries; and one
// that is merely unusual (every entry stored uncompressed), which must work. Each refusal is a
// 422 naming the problem and leaves nothing behind: no row, no file in the storage folder or
// the staging folder, no file descriptor the process did not hold before.
import { createHash } from 'node:crypto';
import { readdirSync, readlinkSync } from 'node:fs';
import path from 'node:path';
import yauzl from 'yauzl';
import yazl from 'yazl';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestApp, TestClient, type TestApp } from '../helpers/app';
import { makePng } from '../helpers/sheet-files';

let t: TestApp;
let owner: TestClient;
let other: TestClient;
let bundle: Buffer;

const binary = (
  res: import('superagent').Response,
  cb: (err: Error | null, body: Buffer) => void,
) => {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
};

type Entries = Record<string, Buffer | string>;

function zipOf(entries: Entries, compress = true): Promise<Buffer> {
  const zip = new yazl.ZipFile();
  for (const [name, body] of Object.entries(entries))
    zip.addBuffer(Buffer.from(body), name, { compress });
  zip.end();
  return new Promise((resolve) => {
    const chunks: Buffer[] = [];
    zip.outputStream.on('data', (c: Buffer) => chunks.push(c));
    zip.outputStream.on('end', () => resolve(Buffer.concat(chunks)));
  });
}

/** The entries of a zip in memory. */
function unzip(bytes: Buffer): Promise<Entries> {
  return new Promise((resolve, reject) => {
    yauzl.fromBuffer(bytes, { lazyEntries: true }, (err, zip) => {
      if (err || !zip) return reject(err);
      const out: Entries = {};
      zip.on('entry', (e: yauzl.Entry) =>
        zip.openReadStream(e, (error, stream) => {
          if (error || !stream) return reject(error);
          const chunks: Buffer[] = [];
          stream.on('data', (c: Buffer) => chunks.push(c));
          stream.on('end', () => {
            out[e.fileName] = Buffer.concat(chunks);
            zip.readEntry();
          });
        }),
      );
      zip.on('end', () => resolve(out));
      zip.readEntry();
    });
  });
}

const importBundle = (bytes: Buffer) =>
  other.agent
    .post('/api/projects/import')
    .set('X-CSRF-Token', other.csrf)
    .attach('file', bytes, 'project.fairsheet.zip');

function filesUnder(dir: string): string[] {
  return readdirSync(dir, { recursive: true, withFileTypes: true })
    .filter((d) => d.isFile())
    .map((d) => path.relative(dir, path.join(d.parentPath, d.name)))
    .sort();
}

/**
 * The process's descriptors that name a file (not a socket, pipe or event queue): the
 * database pool and the test's HTTP connections come and go on their own, an open zip or a
 * temp file would show here.
 */
function fileDescriptors(): string[] {
  return readdirSync('/proc/self/fd')
    .map((fd) => {
      try {
        return readlinkSync(`/proc/self/fd/${fd}`);
      } catch {
        return ''; // closed between the listing and the look (readdir's own handle)
      }
    })
    .filter((link) => link.startsWith('/'))
    .sort();
}

async function rowCounts() {
  const { rows } = await t.database.pool.query(
    `select (select count(*) from projects)::int as projects, (select count(*) from files)::int
       as files, (select count(*) from sheets)::int as sheets, (select count(*) from
       model_revisions)::int as revisions, (select count(*) from activity)::int as activity`,
  );
  return rows[0] as {
    projects: number;
    files: number;
    sheets: number;
    revisions: number;
    activity: number;
  };
}

/** Runs `act` and checks it left no row, file or descriptor behind. */
async function leavesNothing(act: () => Promise<void>) {
  const before = {
    rows: await rowCounts(),
    stored: filesUnder(t.storageDir!),
    fds: fileDescriptors(),
    fdCount: readdirSync('/proc/self/fd').length,
  };
  await act();
  expect(await rowCounts()).toEqual(before.rows);
  expect(filesUnder(t.storageDir!)).toEqual(before.stored);
  expect(filesUnder(t.uploadTempDir)).toEqual([]);
  expect(fileDescriptors()).toEqual(before.fds);
  // Sockets included: never more than before, give or take the pool's five connections.
  expect(readdirSync('/proc/self/fd').length).toBeLessThanOrEqual(before.fdCount + 5);
}

const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');

/** A minimal valid bundle holding `files`, one sheet for each. */
function smallBundle(files: { bytes: Buffer; mimeType: string; sizeBytes?: number }[]): Entries {
  return {
    'manifest.json': JSON.stringify({
      format: 'fairsheet.bundle',
      version: 2,
      exportedAt: new Date().toISOString(),
      project: { name: 'Small', displayUnit: 'mm', modelScale: null },
      files: files.map((f) => ({
        sha256: sha(f.bytes),
        mimeType: f.mimeType,
        sizeBytes: f.sizeBytes ?? f.bytes.length,
      })),
    }),
    'model.json': JSON.stringify({
      format: 'fairsheet.model',
      version: 1,
      units: 'mm',
      dimensions: [],
    }),
    'sheets.json': JSON.stringify(
      files.map((f, i) => ({
        id: `0000000${i}-0000-4000-8000-000000000000`,
        sha256: sha(f.bytes),
        originalName: `sheet-${i}.png`,
        title: `Sheet ${i}`,
        kind: 'drawing',
        page: 1,
        pageCount: 1,
        widthPx: 999,
        heightPx: 999,
        rotation: 0,
        straighten: 0,
        calibration: null,
        pins: [],
        measurements: [],
      })),
    ),
    'corrections.json': '[]',
    'comments.json': '[]',
    ...Object.fromEntries(files.map((f) => [`files/${sha(f.bytes)}`, f.bytes])),
  };
}

/** Sets the central directory's uncompressed size of `name` (APPNOTE 4.3.12: offset 24). */
function declareSize(zip: Buffer, name: string, size: number): Buffer {
  const out = Buffer.from(zip);
  for (let i = out.length - 46; i >= 0; i--) {
    if (out.readUInt32LE(i) !== 0x02014b50) continue;
    const nameLength = out.readUInt16LE(i + 28);
    if (out.toString('utf8', i + 46, i + 46 + nameLength) !== name) continue;
    out.writeUInt32LE(size, i + 24);
    return out;
  }
  throw new Error(`no central directory record for ${name}`);
}

beforeAll(async () => {
  t = await createTestApp();
  owner = new TestClient(t.app);
  await owner.register('bundle.owner@example.com', 'owner password 1', 'Bundle Owner');
  other = new TestClient(t.app);
  await other.register('bundle.other@example.com', 'other password 1', 'Bundle Other');
  const id = (
    await owner.post('/api/projects', { name: 'Abuse source', displayUnit: 'in' }).expect(201)
  ).body.id;
  await owner.agent
    .post(`/api/projects/${id}/sheets`)
    .set('X-CSRF-Token', owner.csrf)
    .attach('file', makePng(40, 30, 1), 'plan.png')
    .expect(201);
  bundle = (await owner.get(`/api/projects/${id}/export`).buffer(true).parse(binary).expect(200))
    .body as Buffer;
  // One import first, so what the app opens once and keeps (the pool, the PDF reader) is open.
  expect((await importBundle(bundle)).status).toBe(201);
});
afterAll(() => t.close());

describe('bundle abuse', () => {
  it('refuses a zip bomb (50 MB of zeros in 50 KB) with 422 before expanding it', async () => {
    const zeros = Buffer.alloc(50 * 1024 * 1024);
    const bomb = await zipOf(smallBundle([{ bytes: zeros, mimeType: 'image/png' }]));
    expect(bomb.length).toBeLessThan(200 * 1024);
    await leavesNothing(async () => {
      const res = await importBundle(bomb);
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/expands \d+ times over; the limit is 100 times/);
    });
  });

  it('refuses an entry whose declared size is over the limit, before expanding it', async () => {
    const big = await zipOf(smallBundle([]));
    await leavesNothing(async () => {
      const res = await importBundle(declareSize(big, 'model.json', 3 * 1024 * 1024));
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/model\.json expands to 3 MB; the limit is 2 MB/);
    });
  });

  it('refuses an entry that expands past the size its directory declares', async () => {
    const entries = smallBundle([]);
    entries['model.json'] = JSON.stringify({
      format: 'fairsheet.model',
      version: 1,
      units: 'mm',
      dimensions: [{ name: 'a', kind: 'stated', value: '1', note: 'x'.repeat(5000) }],
    });
    const lying = declareSize(await zipOf(entries), 'model.json', 100);
    await leavesNothing(async () => {
      const res = await importBundle(lying);
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(
        /model\.json is (larger than its zip entry says|damaged)/,
      );
    });
  });

  it('refuses a model.json over the 2 MB a save accepts, naming the limit', async () => {
    const entries = smallBundle([]);
    entries['model.json'] = JSON.stringify({
      format: 'fairsheet.model',
      version: 1,
      units: 'mm',
      dimensions: [{ name: 'a', kind: 'stated', value: '1', note: 'y'.repeat(2.5 * 1024 * 1024) }],
    });
    await leavesNothing(async () => {
      const res = await importBundle(await zipOf(entries));
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/model\.json expands to 2\.5 MB; the limit is 2 MB/);
    });
  });

  it('refuses a zip of a thousand entries before reading them', async () => {
    const entries = smallBundle([]);
    for (let i = 0; i < 1000; i++) entries[`files/${sha(Buffer.from(String(i)))}`] = String(i);
    await leavesNothing(async () => {
      const res = await importBundle(await zipOf(entries));
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/holds 1005 entries; the limit is 1000/);
    });
  });

  it('refuses a manifest that lists a file at a size it does not have', async () => {
    const png = makePng(6, 5, 11);
    const lying = smallBundle([{ bytes: png, mimeType: 'image/png', sizeBytes: 7 }]);
    await leavesNothing(async () => {
      const res = await importBundle(await zipOf(lying));
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/listed as 7 bytes but holds \d+/);
    });
  });

  it('refuses a bundle file that an upload would refuse (a script listed as a PNG)', async () => {
    const script = Buffer.from('<script>alert(1)</script>');
    await leavesNothing(async () => {
      const res = await importBundle(
        await zipOf(smallBundle([{ bytes: script, mimeType: 'image/png' }])),
      );
      expect(res.status).toBe(422);
      expect(res.body.error.message).toMatch(/not a PDF or an image we can use/);
    });
  });

  it('takes a file’s type and size from its bytes, not the manifest: a PNG listed as a PDF is a PNG', async () => {
    const png = makePng(12, 7, 21);
    const before = fileDescriptors();
    const res = await importBundle(
      await zipOf(smallBundle([{ bytes: png, mimeType: 'application/pdf' }])),
    );
    expect(res.status).toBe(201);
    const [sheet] = (await other.get(`/api/projects/${res.body.id}/sheets`)).body.sheets;
    expect(sheet.file.mimeType).toBe('image/png');
    // The manifest said 999 × 999; the bytes say 12 × 7 (makePng's arguments).
    expect([sheet.widthPx, sheet.heightPx]).toEqual([12, 7]);
    const file = await other.get(`/api/projects/${res.body.id}/sheets/${sheet.id}/file`);
    expect(file.headers['content-type']).toBe('image/png');
    expect(filesUnder(t.uploadTempDir)).toEqual([]);
    expect(fileDescriptors()).toEqual(before);
  });

  it('a file recorded with a wrong type is served by its bytes once anyone uploads it again', async () => {
    // A row as an import before this fix wrote it: the first record named the type.
    const png = makePng(9, 9, 33);
    await t.database.pool.query(
      `insert into files (sha256, mime_type, size_bytes) values ($1, 'application/pdf', 7)`,
      [sha(png)],
    );
    const id = (
      await owner.post('/api/projects', { name: 'Later upload', displayUnit: 'mm' }).expect(201)
    ).body.id;
    const up = await owner.agent
      .post(`/api/projects/${id}/sheets`)
      .set('X-CSRF-Token', owner.csrf)
      .attach('file', png, 'same.png')
      .expect(201);
    const sheet = up.body.sheets[0];
    const file = await owner.get(`/api/projects/${id}/sheets/${sheet.id}/file`).expect(200);
    expect(file.headers['content-type']).toBe('image/png');
    expect(Number(file.headers['content-length'])).toBe(png.length);
  });

  it('imports a bundle whose every entry is stored uncompressed, and closes everything', async () => {
    const stored = await zipOf(await unzip(bundle), false);
    const before = { fds: fileDescriptors(), projects: (await rowCounts()).projects };
    const res = await importBundle(stored);
    expect(res.status).toBe(201);
    expect(res.body.name).toBe('Abuse source');
    const sheets = (await other.get(`/api/projects/${res.body.id}/sheets`)).body.sheets;
    expect(sheets.map((s: { title: string }) => s.title)).toEqual(['plan']);
    expect((await rowCounts()).projects).toBe(before.projects + 1);
    expect(filesUnder(t.uploadTempDir)).toEqual([]);
    expect(fileDescriptors()).toEqual(before.fds);
  });
});
