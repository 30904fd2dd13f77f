/**
 * CSV output: RFC 4180 quoting, and formula-injection neutralising as the OWASP "CSV Injection" page
 * (owasp.org/www-community/attacks/CSV_Injection) describes: a cell starting with `=`, `+`, `-`, `@`,
 * tab (0x09) or carriage return (0x0D) gets a leading single quote, so a spreadsheet shows it as text;
 * NUL is added from OWASP ASVS 5.0 requirement 1.2.10 ('\0' in its list). Values quoted from those
 * pages as remembered; the examples below are worked by hand from the rules.
 */
import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import { csvField, spreadsheetSafe, toCsv } from '../../src/output/csv.js';

describe('spreadsheetSafe(v)', () => {
  it('prefixes a single quote to strings starting with = + - @ tab CR (OWASP list) and NUL (ASVS 1.2.10)', () => {
    const cases: [string, string][] = [
      ['=HYPERLINK("http://x.example","open")', `'=HYPERLINK("http://x.example","open")`],
      ['+cmd|\' /C calc\'!A0', `'+cmd|' /C calc'!A0`],
      ['-2+3+cmd|\' /C calc\'!A0', `'-2+3+cmd|' /C calc'!A0`],
      ['@SUM(1+1)', `'@SUM(1+1)`],
      ['\t=1+1', `'\t=1+1`],
      ['\r=1+1', `'\r=1+1`],
      ['\0=1', `'\0=1`],
      ['+44 7700 900123', `'+44 7700 900123`],
      ['-', `'-`],
    ];
    for (const [input, want] of cases) expect(spreadsheetSafe(input), JSON.stringify(input)).toBe(want);
  });

  it('leaves numbers as numbers, and strings that are plain decimal numbers as they are (a spreadsheet reads them as that number)', () => {
    expect(spreadsheetSafe(-3)).toBe(-3);
    expect(spreadsheetSafe(0.25)).toBe(0.25);
    for (const s of ['-3', '+4.5', '-1e3', '-.5', '+0', '-12.', '1E-7']) expect(spreadsheetSafe(s), s).toBe(s);
  });

  it('neutralises strings that only start like a number', () => {
    for (const s of ['-3+A1', '-1e3)', '+4.5 ', '-3,2', '- 3', '--3', '-3e', '-Infinity', '-NaN']) expect(spreadsheetSafe(s), s).toBe(`'${s}`);
  });

  it('leaves every other value alone: ordinary text, an = later in the text, null, booleans', () => {
    for (const v of ['studio', 'a=b', 'x-y', 'user@makerspace.example', ' =1+1', '', "'=already"]) expect(spreadsheetSafe(v), v).toBe(v);
    expect(spreadsheetSafe(null)).toBe(null);
    expect(spreadsheetSafe(true)).toBe(true);
  });
});

describe('toCsv(header, rows)', () => {
  it('quotes per RFC 4180 §2.6–2.7: commas, quotes and line breaks; doubled quotes inside', () => {
    expect(csvField('a,"b"')).toBe('"a,""b"""');
    expect(toCsv(['k', 'v'], [['x', 'line\nbreak'], ['y', 'cr\rx'], ['z', null]])).toBe('k,v\nx,"line\nbreak"\ny,"cr\rx"\nz,\n');
  });

  it('neutralises every string cell, the header included, inside the quoting (the OWASP example =1+2";=1+2)', () => {
    expect(toCsv(['=name'], [['=1+2";=1+2'], [-3], ['-3'], ['@x']])).toBe(`'=name\n"'=1+2"";=1+2"\n-3\n-3\n'@x\n`);
  });

  it('a cell starting with CR or tab keeps its quote inside the quoted field', () => {
    expect(toCsv(['v'], [['\r=1'], ['\t=1']])).toBe(`v\n"'\r=1"\n'\t=1\n`);
  });

  it('reads back with papaparse (an RFC 4180 reader) to the same cells, each neutralised one with one leading quote', () => {
    const cells = ['plain', 'a,b', 'say "hi"', 'two\nlines', '=SUM(A1:A2)', '-3', '-x', '@me', ''];
    const text = toCsv(['v'], cells.map((c) => [c]));
    // the text ends in a newline, which papaparse reads as one last empty row
    const back = Papa.parse<string[]>(text, { header: false }).data.slice(1, -1).map((r) => r[0]);
    expect(back).toEqual(cells.map((c) => (/^[=+\-@]/.test(c) && c !== '-3' ? `'${c}` : c)));
  });
});
