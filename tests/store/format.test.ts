import { describe, expect, it } from 'vitest';
import { csvField, formatTable, toCsv } from '../../src/store/index.js';

describe('formatTable', () => {
  it('aligns columns: numbers right, text left, NULL shown, control characters escaped', () => {
    const text = formatTable(
      ['id', 'name', 'area'],
      [
        { id: 1, name: 'short', area: 0.5 },
        { id: 12, name: 'a longer name', area: null },
        { id: 3, name: 'two\nlines', area: -Infinity },
      ],
    );
    expect(text).toBe(
      [
        'id  name                area',
        '--  -------------  ---------',
        ' 1  short                0.5',
        '12  a longer name       NULL',
        ' 3  two\\nlines     -Infinity',
        '',
      ].join('\n'),
    );
  });

  it('prints only the header and rule for no rows', () => {
    expect(formatTable(['a', 'bb'], [])).toBe('a  bb\n-  --\n');
  });
});

describe('toCsv', () => {
  it('quotes fields with comma, quote, CR or LF and doubles quotes (RFC 4180, section 2, rules 6-7; from memory)', () => {
    expect(csvField('plain')).toBe('plain');
    expect(csvField('a,b')).toBe('"a,b"');
    expect(csvField('say "hi"')).toBe('"say ""hi"""');
    expect(csvField('line\nbreak')).toBe('"line\nbreak"');
    expect(csvField('cr\r')).toBe('"cr\r"');
  });

  it('writes a header and CRLF-terminated records; NULL is empty; numbers parse back to the same double', () => {
    const values = [0.1 + 0.2, 1e-300, Number.MIN_VALUE, -1 / 3];
    const csv = toCsv(
      ['key', 'value', 'note'],
      values.map((value, i) => ({ key: `k${i}`, value, note: i === 1 ? 'x, "y"' : null })),
    );
    const lines = csv.split('\r\n');
    expect(lines[0]).toBe('key,value,note');
    expect(lines[2]).toBe('k1,1e-300,"x, ""y"""');
    expect(lines[1]).toBe('k0,0.30000000000000004,');
    expect(lines.at(-1)).toBe('');
    values.forEach((value, i) => {
      const field = (lines[i + 1] as string).split(',')[1] as string;
      expect(Object.is(Number(field), value)).toBe(true);
    });
  });
});
