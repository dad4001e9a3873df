import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { spreadsheetCell, toCsv } from '../../../../server/http/csv';

// The leading characters and the treatment (single quote, double quotes) are OWASP's
// "CSV Injection" page: https://owasp.org/www-community/attacks/CSV_Injection
describe('spreadsheetCell', () => {
  it.each([
    ['=HYPERLINK("http://x","y")'],
    ['+1'],
    ['-2+3'],
    ['@SUM(A1)'],
    ['\t=1+2'],
    ['\r=1+2'],
    ['＝1+2'],
  ])('makes %j text: a leading single quote, in double quotes', (text) => {
    expect(spreadsheetCell(text)).toEqual({ value: `'${text}`, quoted: true });
  });

  it.each([['-0.125'], ['-12'], ['7.3125'], ['1721'], ['.5'], ['']])(
    'leaves the plain number (or empty cell) %j bare',
    (text) => {
      expect(spreadsheetCell(text)).toBe(text);
    },
  );

  it('quotes other text without a quote mark, so a separator inside it starts no cell', () => {
    expect(spreadsheetCell('a;=1+2')).toEqual({ value: 'a;=1+2', quoted: true });
    expect(spreadsheetCell('4BA clearance')).toEqual({ value: '4BA clearance', quoted: true });
  });
});

describe('toCsv', () => {
  it('writes OWASP’s two examples as OWASP escapes them, and numbers bare', () => {
    const text = toCsv(
      [
        { a: '=1+2";=1+2', n: '-0.125' },
        { a: `=1+2'" ;,=1+2`, n: 3 },
      ],
      ['a', 'n'],
    );
    // The escaped outputs are the table on OWASP's page, each followed by our bare number.
    expect(text).toBe(`a,n\n"'=1+2"";=1+2",-0.125\n"'=1+2'"" ;,=1+2",3\n`);
    expect(parse(text, { columns: true })).toEqual([
      { a: `'=1+2";=1+2`, n: '-0.125' },
      { a: `'=1+2'" ;,=1+2`, n: '3' },
    ]);
  });
});
