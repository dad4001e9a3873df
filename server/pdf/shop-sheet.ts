// The shop sheet as a PDF (pdfkit, IBM Plex Sans embedded), A4 or Letter, landscape so the
// ordinate table's twelve columns stay readable at the bench. One part (or one stack) starts
// a page; every page carries the true-scale check bars and the inference caution.
import { createRequire } from 'node:module';
import PDFDocument from 'pdfkit';
import type { PaperSize, ShopSheet, ShopSheetGroup, ShopSheetRow } from '@shared/api';
import { lengthNumber, MM_PER_IN } from '@shared/engine';

type Doc = InstanceType<typeof PDFDocument>;

const require = createRequire(import.meta.url);
const FONT_REGULAR =
  require.resolve('@fontsource/ibm-plex-sans/files/ibm-plex-sans-latin-400-normal.woff');
const FONT_BOLD =
  require.resolve('@fontsource/ibm-plex-sans/files/ibm-plex-sans-latin-600-normal.woff');

const INK = '#24405f';
const BRASS = '#b7791f';
const PAPER = '#f7f4ec';
const TEXT = '#1f2a36';
const MUTED = '#5b6675';
const RULE = '#c9c0aa';
const DANGER = '#b3261e';

const MARGIN = 30;
/** 1 mm and 1 in in PDF points (1 pt = 1/72 in exactly). */
const PT_PER_MM = 72 / MM_PER_IN;
const PT_PER_IN = 72;
const FOOTER_H = 62;

/** The Latin subset of the font has no π, arrows or check marks: spell them out. */
function clean(text: string): string {
  return text
    .replace(/π/g, 'pi')
    .replace(/→/g, '->')
    .replace(/≥/g, '>=')
    .replace(/≤/g, '<=')
    .replace(/√/g, 'sqrt')
    .replace(/[✓✔]/g, 'ok');
}

interface Column {
  key: string;
  title: string;
  width: number;
  value: (r: ShopSheetRow) => string;
  align?: 'left' | 'right';
}

function columns(sheet: ShopSheet, group: ShopSheetGroup, available: number): Column[] {
  const u = sheet.units;
  const o = sheet.otherUnits;
  const base: Column[] = [
    { key: 'label', title: 'Feature', width: 124, value: (r) => r.label },
    { key: 'x', title: `X ${u}`, width: 44, value: (r) => r.x.text, align: 'right' },
    { key: 'y', title: `Y ${u}`, width: 44, value: (r) => r.y.text, align: 'right' },
    { key: 'xo', title: `X ${o}`, width: 48, value: (r) => r.x.otherText, align: 'right' },
    { key: 'yo', title: `Y ${o}`, width: 48, value: (r) => r.y.otherText, align: 'right' },
    { key: 'size', title: 'Size or thread', width: 84, value: (r) => r.size },
    { key: 'tap', title: 'Tap drill', width: 100, value: (r) => r.tapDrill },
    { key: 'clear', title: 'Clearance', width: 92, value: (r) => r.clearance },
    { key: 'depth', title: 'Depth', width: 62, value: (r) => r.depth },
    { key: 'tol', title: `± worst ${u}`, width: 42, value: (r) => r.tolerance, align: 'right' },
    { key: 'prov', title: 'Provenance', width: 72, value: (r) => r.provenance },
    { key: 'check', title: 'Check', width: 56, value: (r) => r.check.text },
  ];
  // A column no row of this part uses gives its width to the others.
  const used = base.filter(
    (c) => !(c.key === 'tap' || c.key === 'clear') || group.rows.some((r) => c.value(r) !== ''),
  );
  const total = used.reduce((s, c) => s + c.width, 0);
  return used.map((c) => ({ ...c, width: (c.width * available) / total }));
}

function dateText(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : d.toISOString().slice(0, 10);
}

class SheetWriter {
  readonly doc: Doc;
  readonly width: number;
  readonly height: number;
  readonly left = MARGIN;
  readonly right: number;
  readonly bottom: number;
  y = MARGIN;
  private cols: Column[] = [];
  private group: ShopSheetGroup | null = null;

  constructor(
    readonly sheet: ShopSheet,
    paper: PaperSize,
  ) {
    this.doc = new PDFDocument({
      size: paper === 'letter' ? 'LETTER' : 'A4',
      layout: 'landscape',
      margin: MARGIN,
      bufferPages: true,
      autoFirstPage: false,
      info: {
        Title: `Shop sheet — ${sheet.project.name} (revision ${sheet.revision})`,
        Author: sheet.derivedBy ?? 'Fairsheet',
        Subject: 'Positions, sizes, threads, drills and speeds for the workshop',
        Creator: 'Fairsheet',
      },
    });
    this.doc.registerFont('plex', FONT_REGULAR);
    this.doc.registerFont('plex-bold', FONT_BOLD);
    this.doc.addPage();
    this.width = this.doc.page.width;
    this.height = this.doc.page.height;
    this.right = this.width - MARGIN;
    this.bottom = this.height - MARGIN - FOOTER_H;
  }

  text(
    s: string,
    x: number,
    y: number,
    opts: PDFKit.Mixins.TextOptions & { size?: number; bold?: boolean; color?: string } = {},
  ) {
    const { size = 8, bold = false, color = TEXT, ...rest } = opts;
    this.doc
      .font(bold ? 'plex-bold' : 'plex')
      .fontSize(size)
      .fillColor(color)
      .text(clean(s), x, y, { lineGap: 0.5, ...rest });
  }

  heightOf(s: string, width: number, size = 8, bold = false): number {
    this.doc.font(bold ? 'plex-bold' : 'plex').fontSize(size);
    return this.doc.heightOfString(clean(s), { width, lineGap: 0.5 });
  }

  newPage() {
    this.doc.addPage();
    this.y = MARGIN;
  }

  ensure(h: number, onBreak?: () => void) {
    if (this.y + h <= this.bottom) return;
    this.newPage();
    if (this.group) {
      this.text(`${this.group.title} — continued`, this.left, this.y, {
        size: 10,
        bold: true,
        color: INK,
      });
      this.y += 18;
    }
    onBreak?.();
  }

  // ------------------------------------------------------------------------------------------

  titleBlock(g: ShopSheetGroup) {
    const s = this.sheet;
    const w = 320;
    const x = this.right - w;
    const top = this.y;
    const labelW = 74;
    const rows: Array<[string, string, 'normal' | 'alarm' | 'ok']> = [
      ['Project', s.project.name, 'normal'],
      ['Part', g.title, 'normal'],
      ['Revision', `${s.revision}   ·   ${dateText(s.date)}`, 'normal'],
      ['Derived by', s.derivedBy ?? 'unknown', 'normal'],
      ['Checked by', g.check.text, g.check.state === 'checked' ? 'ok' : 'alarm'],
      [
        'Corrections',
        s.corrections.length
          ? `${s.corrections.length} applied to the source sheets (listed below)`
          : 'none recorded against the source sheets',
        'normal',
      ],
    ];
    let yy = top;
    const measured = rows.map(([label, value, tone]) => ({
      label,
      value,
      tone,
      h: Math.max(
        15,
        this.heightOf(value, w - labelW - 8, tone === 'alarm' ? 9 : 8, tone !== 'normal') + 6,
      ),
    }));
    const total = measured.reduce((a, r) => a + r.h, 0);
    this.doc.lineWidth(1.2).rect(x, top, w, total).stroke(INK);
    measured.forEach(({ label, value, tone, h }, i) => {
      if (tone === 'alarm') {
        this.doc.rect(x + labelW, yy, w - labelW, h).fill('#fbe3e0');
        this.doc
          .lineWidth(1.5)
          .rect(x + labelW + 1, yy + 1, w - labelW - 2, h - 2)
          .stroke(DANGER);
      }
      this.text(label.toUpperCase(), x + 5, yy + 4, {
        size: 6.5,
        bold: true,
        color: MUTED,
        width: labelW - 8,
      });
      this.text(value, x + labelW + 4, yy + 3, {
        size: tone === 'alarm' ? 9 : 8,
        bold: tone !== 'normal',
        color: tone === 'alarm' ? DANGER : TEXT,
        width: w - labelW - 8,
      });
      yy += h;
      if (i < rows.length - 1) {
        this.doc
          .lineWidth(0.4)
          .moveTo(x, yy)
          .lineTo(x + w, yy)
          .stroke(RULE);
      }
    });
    this.doc
      .lineWidth(0.4)
      .moveTo(x + labelW, top)
      .lineTo(x + labelW, top + total)
      .stroke(RULE);
    return { x, bottom: top + total };
  }

  header(g: ShopSheetGroup) {
    const s = this.sheet;
    const top = this.y;
    this.doc.rect(this.left, top, 8, 40).fill(BRASS);
    this.text('SHOP SHEET', this.left + 16, top, {
      size: 9,
      bold: true,
      color: BRASS,
      characterSpacing: 1.5,
    });
    const block = this.titleBlock(g);
    const textW = block.x - this.left - 28;
    this.text(g.title, this.left + 16, top + 13, {
      size: 16,
      bold: true,
      color: INK,
      width: textW,
    });
    let yy = top + 14 + this.heightOf(g.title, textW, 16, true) + 6;
    for (const p of g.parts) {
      const line =
        `${p.name} — ${p.quantity} off · ${p.material} · drills: ${p.drillSet === 'numberLetter' ? 'number and letter' : p.drillSet}` +
        (p.pressure ? ' · PRESSURE-BEARING' : '');
      this.text(line, this.left + 16, yy, {
        size: 8.5,
        width: textW,
        bold: p.pressure,
        color: p.pressure ? DANGER : TEXT,
      });
      yy += this.heightOf(line, textW, 8.5) + 1;
      if (p.notes) {
        this.text(p.notes, this.left + 24, yy, { size: 7.5, color: MUTED, width: textW - 8 });
        yy += this.heightOf(p.notes, textW - 8, 7.5) + 2;
      }
    }
    if (g.stack) {
      const t = `Machined as one stack (${g.stack}): clamp the parts together and drill every hole through the stack.`;
      this.text(t, this.left + 16, yy + 2, { size: 7.5, color: INK, width: textW });
      yy += this.heightOf(t, textW, 7.5) + 4;
    }
    const units = `Positions from the datum in ${s.units === 'in' ? 'inches' : 'millimetres'} and ${s.otherUnits === 'in' ? 'inches' : 'millimetres'}. ${s.order}`;
    this.text(units, this.left + 16, yy + 2, { size: 7.5, color: MUTED, width: textW });
    yy += this.heightOf(units, textW, 7.5) + 4;
    this.y = Math.max(yy, block.bottom) + 10;
  }

  tableHeader() {
    const h = 22;
    this.doc.rect(this.left, this.y, this.right - this.left, h).fill(INK);
    let x = this.left;
    for (const c of this.cols) {
      this.text(c.title, x + 3, this.y + 4, {
        size: 7,
        bold: true,
        color: '#ffffff',
        width: c.width - 6,
        align: c.align ?? 'left',
      });
      x += c.width;
    }
    this.y += h;
  }

  table(g: ShopSheetGroup) {
    this.cols = columns(this.sheet, g, this.right - this.left);
    this.ensure(60);
    this.tableHeader();
    g.rows.forEach((r, i) => {
      const notes = [...r.errors, ...r.warnings];
      const cellH = Math.max(
        ...this.cols.map((c) => this.heightOf(c.value(r), c.width - 6, 7.5, c.key === 'label')),
      );
      const notesH = notes.length
        ? this.heightOf(notes.join(' '), this.right - this.left - 24, 7) + 2
        : 0;
      const h = cellH + notesH + 6;
      this.ensure(h, () => this.tableHeader());
      if (i % 2 === 1) this.doc.rect(this.left, this.y, this.right - this.left, h).fill(PAPER);
      if (r.warnings.length) this.doc.rect(this.left, this.y, 3, h).fill(BRASS);
      if (r.errors.length) this.doc.rect(this.left, this.y, 3, h).fill(DANGER);
      let x = this.left;
      for (const c of this.cols) {
        const alarm = c.key === 'check' && r.check.state !== 'checked';
        this.text(c.value(r), x + 3, this.y + 3, {
          size: 7.5,
          bold:
            c.key === 'label' ||
            c.key === 'x' ||
            c.key === 'y' ||
            (alarm && r.check.state === 'void'),
          color: c.key === 'check' && r.check.state === 'void' ? DANGER : alarm ? MUTED : TEXT,
          width: c.width - 6,
          align: c.align ?? 'left',
        });
        x += c.width;
      }
      if (notes.length) {
        this.text(notes.map((n) => `(!) ${n}`).join('  '), this.left + 12, this.y + cellH + 4, {
          size: 7,
          color: r.errors.length ? DANGER : '#8a5a12',
          width: this.right - this.left - 24,
        });
      }
      this.y += h;
      this.doc.lineWidth(0.3).moveTo(this.left, this.y).lineTo(this.right, this.y).stroke(RULE);
    });
    if (!g.rows.length) {
      this.text('No features on this part yet.', this.left + 4, this.y + 4, {
        size: 8,
        color: MUTED,
      });
      this.y += 18;
    }
    this.y += 10;
  }

  drills(g: ShopSheetGroup) {
    if (!g.drills.length) return;
    const cols: Array<[string, number, (d: ShopSheetGroup['drills'][number]) => string]> = [
      ['Drill', 70, (d) => d.drill],
      ['mm', 46, (d) => lengthNumber(d.mm, 'mm')],
      ['in', 46, (d) => lengthNumber(d.inch, 'in')],
      ['Material', 190, (d) => d.material],
      ['Vc m/min', 50, (d) => String(d.vcMPerMin)],
      ['Spindle rpm', 60, (d) => String(d.rpm)],
      ['Holes', 40, (d) => String(d.holes)],
    ];
    const w = cols.reduce((s, c) => s + c[1], 0);
    this.ensure(40 + g.drills.length * 13);
    this.text('Drills and spindle speeds', this.left, this.y, { size: 10, bold: true, color: INK });
    this.text(
      // The figures rest on incoherency.co.uk lathe speeds (check-values §9); the sheet names the practice only.
      'N = 1000 × Vc / (π × D), Vc the low end of the HSS drilling range for the material (workshop practice)',
      this.left + 150,
      this.y + 2,
      { size: 7, color: MUTED, width: this.right - this.left - 150 },
    );
    this.y += 15;
    let x = this.left;
    this.doc.rect(this.left, this.y, w, 14).fill(INK);
    for (const [title, cw] of cols) {
      this.text(title, x + 3, this.y + 3, { size: 7, bold: true, color: '#ffffff', width: cw - 6 });
      x += cw;
    }
    this.y += 14;
    for (const d of g.drills) {
      this.ensure(13);
      x = this.left;
      for (const [, cw, value] of cols) {
        this.text(value(d), x + 3, this.y + 2, { size: 7.5, width: cw - 6, lineBreak: false });
        x += cw;
      }
      this.y += 13;
      this.doc
        .lineWidth(0.3)
        .moveTo(this.left, this.y)
        .lineTo(this.left + w, this.y)
        .stroke(RULE);
    }
    this.y += 10;
  }

  box(title: string, lines: string[], color: string) {
    const w = this.right - this.left;
    const body = lines.map((l) => ({ l, h: this.heightOf(l, w - 20, 8) + 3 }));
    const h = 20 + body.reduce((a, b) => a + b.h, 0) + 4;
    this.ensure(h);
    this.doc
      .lineWidth(color === DANGER ? 1.6 : 0.8)
      .rect(this.left, this.y, w, h)
      .stroke(color);
    this.text(title, this.left + 8, this.y + 6, { size: 8.5, bold: true, color });
    let yy = this.y + 20;
    for (const line of body) {
      this.text(line.l, this.left + 10, yy, { size: 8, width: w - 20 });
      yy += line.h;
    }
    this.y += h + 8;
  }

  group_(g: ShopSheetGroup, first: boolean) {
    if (!first) this.newPage();
    this.group = null;
    this.header(g);
    this.group = g;
    this.table(g);
    this.drills(g);
    if (g.pressure) {
      this.box(
        'PRESSURE-BEARING PART',
        [...g.cautions, ...g.pressureFeatures.map((f) => `•  ${f.label}: rests on ${f.restsOn}`)],
        DANGER,
      );
    }
    const c = this.sheet.corrections;
    if (c.length) {
      this.box(
        'Corrections applied to the source sheets',
        c.map(
          (x) =>
            `•  ${[x.sheet, x.dimension].filter(Boolean).join(' · ') || 'sheet'}: ${x.wrong} corrected to ${x.corrected}` +
            (x.reason ? ` — ${x.reason}` : '') +
            (x.by ? ` (${x.by}${x.date ? `, ${dateText(x.date)}` : ''})` : ''),
        ),
        INK,
      );
    }
    this.box(
      'Before cutting',
      this.sheet.cautions.map((t) => `•  ${t}`),
      BRASS,
    );
  }

  /** Footer of every page: the true-scale bars, the caution line and the page number. */
  footers() {
    const range = this.doc.bufferedPageRange();
    for (let i = range.start; i < range.start + range.count; i++) {
      this.doc.switchToPage(i);
      // Writing below the bottom margin would make pdfkit start a new page.
      this.doc.page.margins.bottom = 0;
      const top = this.height - MARGIN - FOOTER_H + 10;
      const span = this.right - this.left;
      this.doc
        .lineWidth(0.5)
        .moveTo(this.left, top - 4)
        .lineTo(this.right, top - 4)
        .stroke(RULE);
      this.text(
        'TRUE-SCALE CHECK: print at 100 % (actual size, no fit to page); these bars must measure 100 mm and 4 in.',
        this.left,
        top,
        { size: 6.5, bold: true, color: INK, lineBreak: false },
      );
      this.text(
        'Derived dimensions are inferences: verify against mating parts and the actual material before cutting.',
        this.left,
        top,
        { size: 7, bold: true, color: DANGER, width: span, align: 'right', lineBreak: false },
      );
      // Bars at exact size: 100 mm and 4 in, measured with a rule after printing at 100 %.
      const barY = top + 16;
      this.scaleBar(this.left, barY, 100 * PT_PER_MM, 10, 10 * PT_PER_MM, '100 mm');
      this.scaleBar(
        this.left + 100 * PT_PER_MM + 40,
        barY,
        4 * PT_PER_IN,
        8,
        PT_PER_IN / 2,
        '4 in',
      );
      this.text(
        `${this.sheet.project.name} · revision ${this.sheet.revision} · page ${i - range.start + 1} of ${range.count}`,
        this.left,
        barY + 22,
        { size: 6.5, color: MUTED, width: span, align: 'right', lineBreak: false },
      );
    }
  }

  scaleBar(x: number, y: number, length: number, divisions: number, step: number, label: string) {
    const h = 7;
    for (let k = 0; k < divisions; k++) {
      this.doc.rect(x + k * step, y, step, h).fill(k % 2 === 0 ? INK : '#ffffff');
    }
    this.doc.lineWidth(0.6).rect(x, y, length, h).stroke(INK);
    this.doc
      .lineWidth(0.6)
      .moveTo(x, y - 3)
      .lineTo(x, y + h + 3)
      .stroke(INK);
    this.doc
      .moveTo(x + length, y - 3)
      .lineTo(x + length, y + h + 3)
      .stroke(INK);
    this.text(label, x, y + h + 4, {
      size: 7,
      bold: true,
      color: INK,
      width: length,
      align: 'center',
    });
  }

  async finish(): Promise<Buffer> {
    this.footers();
    const chunks: Buffer[] = [];
    this.doc.on('data', (c: Buffer) => chunks.push(c));
    const done = new Promise<void>((resolve, reject) => {
      this.doc.on('end', () => resolve());
      this.doc.on('error', reject);
    });
    this.doc.end();
    await done;
    return Buffer.concat(chunks);
  }
}

/**
 * Renders a shop sheet to PDF bytes.
 *
 * @example const pdf = await renderShopSheetPdf(sheet, 'letter');
 */
export async function renderShopSheetPdf(sheet: ShopSheet, paper: PaperSize): Promise<Buffer> {
  const w = new SheetWriter(sheet, paper);
  if (!sheet.groups.length) {
    w.text('SHOP SHEET', w.left, w.y, { size: 9, bold: true, color: BRASS });
    w.text(sheet.project.name, w.left, w.y + 14, { size: 16, bold: true, color: INK });
    w.text(
      'This project has no parts yet: add parts and features to get a shop sheet.',
      w.left,
      w.y + 40,
      {
        size: 10,
      },
    );
    w.y += 70;
    w.box(
      'Before cutting',
      sheet.cautions.map((t) => `•  ${t}`),
      BRASS,
    );
  }
  sheet.groups.forEach((g, i) => w.group_(g, i === 0));
  return w.finish();
}
