import { stringify } from 'csv-stringify/sync';

/**
 * Leading characters that make a spreadsheet read a cell as a formula: `=`, `+`, `-`, `@`, tab
 * and carriage return (OWASP, "CSV Injection",
 * https://owasp.org/www-community/attacks/CSV_Injection), and their full-width forms, which
 * some spreadsheets fold into them (csv-stringify's own `escape_formulas` lists them as well).
 */
const FORMULA_LEAD = /^[=+\-@\t\r\uFF1D\uFF0B\uFF0D\uFF20]/;

/** A number as we write one (`-0.1250`, `1721`): a spreadsheet reads it as a number, not a formula. */
const PLAIN_NUMBER = /^-?(?:\d+(?:\.\d*)?|\.\d+)$/;

/** A cell as csv-stringify takes it from a cast: the text, and whether to quote it. */
export type CsvCell = string | { value: string; quoted: true };

/**
 * A cell that a spreadsheet opens as the text it is. As OWASP recommends, text a spreadsheet
 * would take for a formula gets a leading single quote (the spreadsheet's "this is text" mark)
 * and double quotes around it. Other text is quoted too, so a separator the spreadsheet splits
 * on (`;` in many locales, tab) cannot start a new cell in the middle of it; plain numbers and
 * empty cells stay bare, so `-0.125` is still a number.
 *
 * @example spreadsheetCell('=1+2') // { value: "'=1+2", quoted: true }
 * @example spreadsheetCell('-0.125') // '-0.125'
 */
export function spreadsheetCell(text: string): CsvCell {
  if (text === '' || PLAIN_NUMBER.test(text)) return text;
  return { value: FORMULA_LEAD.test(text) ? `'${text}` : text, quoted: true };
}

/**
 * RFC 4180 text of `records` under a header of `columns`, every cell through
 * `spreadsheetCell` (the header is ours and stays bare).
 *
 * @example toCsv([{ label: '=A1', x: '-1.5' }], ['label', 'x']) // 'label,x\n"\'=A1",-1.5\n'
 */
export function toCsv<K extends string>(
  records: Record<K, string | number>[],
  columns: readonly K[],
): string {
  return stringify(records, {
    header: true,
    columns: [...columns],
    cast: {
      string: (value, context) => (context.header ? value : spreadsheetCell(value)),
      number: (value) => spreadsheetCell(String(value)),
    },
  });
}
