/**
 * The row a statement always answers: an INSERT … RETURNING of one row, a count(*), an
 * UPDATE … RETURNING of a row the caller has just found or locked. The driver answers an
 * array either way; no row here is a fault of the server, not of the request, so it throws a
 * plain Error (logged, answered 500).
 *
 * @example const project = oneRow(await db.insert(projects).values(v).returning(), 'insert project');
 */
export function oneRow<T>(rows: readonly T[], statement: string): T {
  const [row] = rows;
  if (row === undefined) throw new Error(`${statement} answered no row`);
  return row;
}
