import { and, asc, eq, notExists, sql } from 'drizzle-orm';
import type { Db } from './client';
import type { DbOrTx } from './models';
import { oneRow } from './rows';
import { files, sheets, type FileRow, type SheetRow } from './schema';

type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];

export type NewSheet = typeof sheets.$inferInsert;
export type SheetWithFile = SheetRow & { file: FileRow };
export type FileValues = Pick<FileRow, 'sha256' | 'mimeType' | 'sizeBytes'>;

const withFile = { sheet: sheets, file: files };
const flatten = (r: { sheet: SheetRow; file: FileRow }): SheetWithFile => ({
  ...r.sheet,
  file: r.file,
});

/**
 * Adds the file's row, or locks the one already there, until the transaction ends: a sheet
 * being deleted elsewhere cannot drop the file while this upload comes to use it. The type and
 * size are those just read from the bytes, so they replace what the row held: a row written
 * before every file was inspected (a bundle's listed type, trusted) is mended by the next use.
 */
export async function lockOrInsertFile(tx: Tx, values: FileValues) {
  await tx
    .insert(files)
    .values(values)
    .onConflictDoUpdate({
      target: files.sha256,
      set: { mimeType: sql`excluded.mime_type`, sizeBytes: sql`excluded.size_bytes` },
    });
}

/** Locks a file's row for the rest of the transaction; undefined when it is gone. */
export async function lockFile(tx: Tx, sha256: string) {
  const [row] = await tx.select().from(files).where(eq(files.sha256, sha256)).for('update');
  return row;
}

export async function countSheetsUsing(tx: Tx, sha256: string): Promise<number> {
  const rows = await tx
    .select({ n: sql<number>`count(*)::int` })
    .from(sheets)
    .where(eq(sheets.fileSha256, sha256));
  return oneRow(rows, 'count sheets').n;
}

export async function deleteFile(tx: Tx, sha256: string) {
  await tx.delete(files).where(eq(files.sha256, sha256));
}

/** Files no sheet uses (left by a deleted project), locked; busy ones are skipped. */
export async function lockUnusedFiles(tx: Tx, limit: number) {
  return tx
    .select({ sha256: files.sha256 })
    .from(files)
    .where(
      notExists(
        tx
          .select({ one: sql`1` })
          .from(sheets)
          .where(eq(sheets.fileSha256, files.sha256)),
      ),
    )
    .limit(limit)
    .for('update', { skipLocked: true });
}

export async function insertSheets(tx: Tx, values: NewSheet[]): Promise<SheetRow[]> {
  return tx.insert(sheets).values(values).returning();
}

export async function listSheets(db: Db, projectId: string): Promise<SheetWithFile[]> {
  const rows = await db
    .select(withFile)
    .from(sheets)
    .innerJoin(files, eq(files.sha256, sheets.fileSha256))
    .where(eq(sheets.projectId, projectId))
    .orderBy(asc(sheets.seq));
  return rows.map(flatten);
}

export async function findSheet(
  db: DbOrTx,
  projectId: string,
  sheetId: string,
): Promise<SheetWithFile | undefined> {
  const [row] = await db
    .select(withFile)
    .from(sheets)
    .innerJoin(files, eq(files.sha256, sheets.fileSha256))
    .where(and(eq(sheets.projectId, projectId), eq(sheets.id, sheetId)));
  return row && flatten(row);
}

/** The sheet, locked for the rest of the transaction so two changes cannot interleave. */
export async function lockSheet(
  tx: Tx,
  projectId: string,
  sheetId: string,
): Promise<SheetWithFile | undefined> {
  const [row] = await tx
    .select(withFile)
    .from(sheets)
    .innerJoin(files, eq(files.sha256, sheets.fileSha256))
    .where(and(eq(sheets.projectId, projectId), eq(sheets.id, sheetId)))
    .for('update', { of: sheets });
  return row && flatten(row);
}

export async function updateSheet(
  tx: Tx,
  sheetId: string,
  values: Partial<
    Pick<
      SheetRow,
      | 'title'
      | 'kind'
      | 'rotation'
      | 'straighten'
      | 'calibration'
      | 'pins'
      | 'measurements'
      | 'revision'
    >
  >,
): Promise<SheetRow> {
  const rows = await tx
    .update(sheets)
    .set({ ...values, updatedAt: sql`now()` })
    .where(eq(sheets.id, sheetId))
    .returning();
  return oneRow(rows, 'update sheet');
}

/** Deletes the sheet and answers the file it used; undefined when there was no such sheet. */
export async function deleteSheet(tx: Tx, projectId: string, sheetId: string) {
  const [row] = await tx
    .delete(sheets)
    .where(and(eq(sheets.projectId, projectId), eq(sheets.id, sheetId)))
    .returning({ fileSha256: sheets.fileSha256 });
  return row?.fileSha256;
}
