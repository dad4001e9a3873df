import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { parse } from 'csv-parse/sync';
import { SHOP_SHEET_CSV_COLUMNS, type ShopSheet } from '@shared/api';
import { upsertMembership } from '../../server/db/projects';
import { findUserByEmail } from '../../server/db/users';
import { demoProjectName, demoPassword, seedDemo } from '../../server/demo/seed';
import { createTestApp, TestClient, testHasher, type TestApp } from '../helpers/app';
import { readPdf } from '../helpers/pdf-text';

let t: TestApp;
let builder: TestClient;
let projectId = '';

/** RFC 4180 records as objects keyed by the header (csv-parse, the reader of csv-stringify's family). */
const parseCsv = (text: string): Record<string, string>[] =>
  parse(text, { columns: true, bom: true });

const binary = (res: { body: unknown }) => res.body as Buffer;

function pdfRequest(c: TestClient, url: string) {
  return c
    .get(url)
    .buffer(true)
    .parse((res, done) => {
      const chunks: Buffer[] = [];
      res.on('data', (b: Buffer) => chunks.push(b));
      res.on('end', () => done(null, Buffer.concat(chunks)));
    });
}

beforeAll(async () => {
  t = await createTestApp();
  await seedDemo(t.database.db, testHasher);
  builder = new TestClient(t.app);
  expect((await builder.login('builder@example.com', demoPassword)).status).toBe(200);
  const list = await builder.get('/api/projects').expect(200);
  projectId = list.body.projects.find((p: { name: string }) => p.name === demoProjectName).id;
});
afterAll(() => t?.close());

describe('GET /api/projects/:projectId/shop-sheet (JSON for the print view)', () => {
  it('lists the frames once as a stack with both plates, then each other part', async () => {
    const res = await builder.get(`/api/projects/${projectId}/shop-sheet`).expect(200);
    const sheet = res.body as ShopSheet;
    expect(sheet.groups.map((g) => g.id)).toEqual([
      'frames',
      'hornblock',
      'horn_stay',
      'steam_flange',
      'lub_boss',
    ]);
    expect(sheet.groups[0]!.parts.map((p) => p.id)).toEqual(['frame_l', 'frame_r']);
    expect(sheet.derivedBy).toBe('Alex Marsh (builder)');
    expect(sheet.revision).toBeGreaterThanOrEqual(1);
    // The demo's checks cover two derived positions only: every title block says so unmissably.
    expect(sheet.groups.every((g) => /NOT CHECKED|VOID/.test(g.check.text))).toBe(true);
    const fwd = sheet.groups[0]!.rows.find((r) => r.label === 'Leading horn, forward bolts 1/2')!;
    // 8 3/4 − 2 1/4 / 2 − 5/16 = 7 5/16 in = 185.7375 mm (rounded half up to 185.738).
    expect(fwd.x.text).toBe('7.3125');
    expect(fwd.x.otherText).toBe('185.738');
    expect(fwd.size).toBe('4BA clearance, close');
    expect(fwd.provenance).toBe('derived (stated)');
    // The row's tolerance is the solver's worst case of the frame's own derived dimension.
    const stored = await builder.get(`/api/projects/${projectId}/model`).expect(200);
    const solved = await builder.post('/api/solve', { model: stored.body.model }).expect(200);
    const wc = solved.body.values.horn1_bolt_fwd_x.worstCase as number;
    expect(fwd.tolerance).toBe(`±${wc.toFixed(4)}`);
  });
});

describe('GET /api/projects/:projectId/shop-sheet.pdf', () => {
  let a4: Awaited<ReturnType<typeof readPdf>>;

  beforeAll(async () => {
    const res = await pdfRequest(builder, `/api/projects/${projectId}/shop-sheet.pdf`).expect(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['content-disposition']).toMatch(
      /attachment; filename="?.*-r\d+-shop-sheet-a4\.pdf"?/,
    );
    a4 = await readPdf(binary(res));
  });

  it('holds the demo’s derived coordinates in inches and millimetres', () => {
    // Leading horn forward bolt: 7.3125 in / 185.738 mm; trailing aft: 18.6875 in / 474.663 mm.
    for (const figure of ['7.3125', '185.738', '18.6875', '474.663', '0.6875', '17.463']) {
      expect(a4.text).toContain(figure);
    }
    // The steam flange studs on the pitch circle: 0.625 + 0.89/2 = 1.0700 in, 27.178 mm.
    expect(a4.text).toContain('1.0700');
    expect(a4.text).toContain('27.178');
  });

  it('carries the cautions, the title block and the true-scale check on every page', () => {
    for (const page of a4.pages) {
      expect(page).toMatch(/Derived dimensions are inferences/);
      expect(page).toMatch(/TRUE-SCALE CHECK/);
      expect(page).toMatch(/100 mm/);
      expect(page).toMatch(/4 in/);
    }
    expect(a4.text).toMatch(/verify every position against the mating parts/i);
    expect(a4.text).toMatch(/eye protection/);
    expect(a4.text).toMatch(/secure|clamped/);
    expect(a4.text).toMatch(/NOT CHECKED/);
    expect(a4.text).toMatch(/Alex Marsh \(builder\)/);
    // The demo records one correction of sheet 2 (see server/demo/seed.ts).
    expect(a4.text).toMatch(/1 applied to the source sheets/);
  });

  it('tells the inspector which features of the pressure-bearing flange rest on scaled values', () => {
    expect(a4.text).toMatch(/applicable boiler code/);
    expect(a4.text).toMatch(/local club or authority/);
    expect(a4.text).toMatch(/Studs: rests on steam_flange\.pcd \(scaled\)/);
  });

  it('gives spindle speeds from N = 1000·Vc/(π·D)', () => {
    // 3.7 mm in mild steel at 20 m/min: 1000 × 20 / (π × 3.7) = 1720.6 → 1721 rpm (check-values §9).
    expect(a4.text).toContain('1721');
    // #31 (3.048 mm) in grey cast iron at 15 m/min: 15000 / (π × 3.048) = 1566.49 → 1566 rpm.
    expect(a4.text).toContain('1566');
  });

  it('is A4 landscape by default and Letter landscape on request', async () => {
    // A4 = 210 × 297 mm = 595.28 × 841.89 pt; Letter = 8.5 × 11 in = 612 × 792 pt.
    expect(a4.sizes[0]![2]).toBeCloseTo(841.89, 1);
    expect(a4.sizes[0]![3]).toBeCloseTo(595.28, 1);
    const res = await pdfRequest(
      builder,
      `/api/projects/${projectId}/shop-sheet.pdf?paper=letter`,
    ).expect(200);
    const letter = await readPdf(binary(res));
    expect(letter.sizes[0]![2]).toBeCloseTo(792, 3);
    expect(letter.sizes[0]![3]).toBeCloseTo(612, 3);
    expect(letter.text).toContain('185.738');
  });

  it('refuses an unknown paper size with 400', async () => {
    await builder.get(`/api/projects/${projectId}/shop-sheet.pdf?paper=a3`).expect(400);
  });
});

describe('GET /api/projects/:projectId/shop-sheet.csv', () => {
  it('has one line per hole with the documented columns and both units', async () => {
    const res = await builder.get(`/api/projects/${projectId}/shop-sheet.csv`).expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    const rows = parseCsv(res.text);
    expect(Object.keys(rows[0]!)).toEqual([...SHOP_SHEET_CSV_COLUMNS]);
    const fwd = rows.find((r) => r.label === 'Leading horn, forward bolts 1/2')!;
    expect(fwd).toMatchObject({
      group: 'frames',
      part: 'frame_l',
      x_in: '7.3125',
      y_in: '0.5000',
      x_mm: '185.738',
      y_mm: '12.700',
      size: '4BA clearance, close',
      rpm: '1721',
      check: 'CHECK VOID',
    });
    const tapped = rows.find((r) => r.feature === 'hs_adjuster')!;
    // M4 tapped with 3.3 mm (ISO 2306-type chart, check-values §2.2).
    expect(tapped.tap_drill).toMatch(/^3\.3 mm/);
    const oil = rows.find((r) => r.feature === 'lb_oil')!;
    expect(oil.size).toBe('1/8x40 ME tapped');
    // The hornblock: 2 rows of 2 flange holes and 2 stay studs, one line per hole.
    expect(rows.filter((r) => r.group === 'hornblock')).toHaveLength(6);
    const stretcher = rows.find((r) => r.feature === 'stretcher_hole')!;
    expect(stretcher.x_in).toBe('');
    expect(stretcher.warnings).toMatch(/position is open/);
  });

  it('makes labels a spreadsheet would run as formulas into text, and leaves negative numbers numbers', async () => {
    // The leading characters and the treatment (a single quote inside double quotes) are
    // OWASP's "CSV Injection" page: https://owasp.org/www-community/attacks/CSV_Injection
    const labels = ['=HYPERLINK("http://x","y")', '+1', '@SUM(A1)', '-2+3', '\t=1+2'];
    const created = await builder
      .post('/api/projects', { name: 'Formula labels', displayUnit: 'in' })
      .expect(201);
    const url = `/api/projects/${created.body.id}`;
    const model = {
      format: 'fairsheet.model',
      version: 1,
      units: 'in',
      dimensions: [],
      parts: [{ id: 'plate', name: 'Plate' }],
      features: labels.map((label, i) => ({
        id: `f${i}`,
        part: 'plate',
        kind: 'hole',
        label,
        x: -0.125,
        y: i,
      })),
    };
    await builder.put(`${url}/model`, { revision: 0, model }).expect(200);
    const res = await builder.get(`${url}/shop-sheet.csv`).expect(200);
    const rows = parseCsv(res.text);
    const labelOf = (i: number) => rows.find((r) => r.feature === `f${i}`)!.label;
    expect(labelOf(0)).toBe(`'=HYPERLINK("http://x","y")`);
    expect(labelOf(1)).toBe(`'+1`);
    expect(labelOf(2)).toBe(`'@SUM(A1)`);
    expect(labelOf(3)).toBe(`'-2+3`);
    // Labels are trimmed before the sheet is made: the tab goes, the formula after it is made text.
    expect(labelOf(4)).toBe(`'=1+2`);
    expect(res.text).toContain(`"'=HYPERLINK(""http://x"",""y"")"`);
    // −0.125 in = −3.175 mm: numbers, written bare, not made text.
    expect(rows.every((r) => r.x_in === '-0.1250' && r.x_mm === '-3.175')).toBe(true);
    expect(res.text).toMatch(/,-0\.1250,/);
    expect(res.text).not.toContain(`'-0.1250`);
  });
});

describe('who may download the shop sheet', () => {
  it('a viewer may download the PDF and the CSV', async () => {
    const viewer = new TestClient(t.app);
    await viewer.register('viewer@example.com');
    const user = await findUserByEmail(t.database.db, 'viewer@example.com');
    await upsertMembership(t.database.db, projectId, user!.id, 'viewer');
    await pdfRequest(viewer, `/api/projects/${projectId}/shop-sheet.pdf`).expect(200);
    await viewer.get(`/api/projects/${projectId}/shop-sheet.csv`).expect(200);
    await viewer.get(`/api/projects/${projectId}/shop-sheet`).expect(200);
  });

  it('the checker may download it too', async () => {
    const checker = new TestClient(t.app);
    expect((await checker.login('checker@example.com', demoPassword)).status).toBe(200);
    await checker.get(`/api/projects/${projectId}/shop-sheet.csv`).expect(200);
  });

  it('a stranger gets 404 and learns nothing of the project', async () => {
    const stranger = new TestClient(t.app);
    await stranger.register('stranger@example.com');
    for (const suffix of ['shop-sheet', 'shop-sheet.pdf', 'shop-sheet.csv']) {
      const res = await stranger.get(`/api/projects/${projectId}/${suffix}`).expect(404);
      expect(JSON.stringify(res.body)).not.toMatch(/Kestrel/);
    }
  });

  it('signed out gets 401', async () => {
    const anon = new TestClient(t.app);
    for (const suffix of ['shop-sheet', 'shop-sheet.pdf', 'shop-sheet.csv']) {
      await anon.get(`/api/projects/${projectId}/${suffix}`).expect(401);
    }
  });
});

describe('checks and corrections on the shop sheet', () => {
  it('marks a row whose derived position was checked and then changed upstream as CHECK VOID', async () => {
    const sheet = (await builder.get(`/api/projects/${projectId}/shop-sheet`).expect(200))
      .body as ShopSheet;
    const rows = sheet.groups.flatMap((g) => g.rows);
    // The demo's checker checked horn1_bolt_fwd_x (feature h1_fwd's X); the bolt-edge tolerance
    // changed afterwards. horn2_x (the trailing cut-out's X) is still current.
    const voided = rows.filter((r) => r.feature === 'h1_fwd');
    expect(voided.length).toBeGreaterThan(0);
    expect(voided.every((r) => r.check.state === 'void' && r.check.text === 'CHECK VOID')).toBe(
      true,
    );
    expect(sheet.corrections).toEqual([
      expect.objectContaining({
        dimension: 'bolt_low',
        wrong: '7/16 (lower bolt row, hornblock detail)',
        corrected: '1/2',
        by: 'Alex Marsh (builder)',
      }),
    ]);
  });

  it('prints the correction and the void check in the PDF', async () => {
    const res = await builder
      .get(`/api/projects/${projectId}/shop-sheet.pdf?paper=a4`)
      .buffer(true)
      .parse((r, cb) => {
        const chunks: Buffer[] = [];
        r.on('data', (c: Buffer) => chunks.push(c));
        r.on('end', () => cb(null, Buffer.concat(chunks)));
      });
    const { text } = await readPdf(binary(res));
    expect(text).toContain('CHECK VOID');
    expect(text).toMatch(/7\/16 \(lower bolt row/);
  });
});
