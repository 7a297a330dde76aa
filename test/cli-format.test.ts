/** Terminal formatting: aligned columns, colour only on a terminal without NO_COLOR. */
import { describe, expect, it } from 'vitest';
import { colourAllowed, formatNumber, formatQuantity, formatTable } from '../src/cli/format';

describe('plain-text tables', () => {
  it('columns line up, right-aligned where asked, with no trailing spaces', () => {
    const t = formatTable(
      [
        ['a', '1'],
        ['longer', '22.5'],
      ],
      { header: ['name', 'value'], align: ['left', 'right'] },
    );
    expect(t.split('\n')).toEqual(['name    value', '------  -----', 'a           1', 'longer   22.5']);
  });

  it('ragged rows get empty cells and an indent is applied to every line', () => {
    expect(formatTable([['x'], ['y', 'z']], { indent: '  ' })).toBe('  x\n  y  z');
  });

  it('colour only on a TTY, never with NO_COLOR set (no-color.org convention)', () => {
    expect(colourAllowed({ isTTY: true }, {})).toBe(true);
    expect(colourAllowed({ isTTY: false }, {})).toBe(false);
    expect(colourAllowed({ isTTY: true }, { NO_COLOR: '1' })).toBe(false);
    expect(formatTable([['a']], { header: ['h'], colour: false })).not.toContain('\u001b');
    expect(formatTable([['a']], { header: ['h'], colour: true })).toContain('\u001b[1m');
  });

  it('quantities carry SI prefixes; missing values read n/a', () => {
    // 299792458 / 0.44 Hz = 681.3 MHz to 4 digits (c exact by the SI definition of the metre)
    expect(formatQuantity(299792458 / 0.44, 'Hz')).toBe('681.3 MHz');
    expect(formatQuantity(null, 'm')).toBe('n/a');
    expect(formatQuantity(NaN, 'm')).toBe('n/a');
    expect(formatQuantity(Infinity, 'm')).toBe('infinite');
    expect(formatNumber(0.99485)).toBe('0.9949');
    expect(formatNumber(1.0257e7)).toBe('1.026e+7');
  });
});
