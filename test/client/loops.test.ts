import { describe, expect, it } from 'vitest';
import { loopNames, loopNamesInText } from '../../client/src/loops';
import { fileStem, pngBytes } from '../../client/src/file-names';

const text = [
  'plant Boom { state tilt [rad] }',
  '# loop Commented { }',
  'loop Upright {',
  '}',
  '  loop ΘHold "second" {',
  '}',
  'controller loopish { }',
].join('\n');

describe('loop names for the palette', () => {
  it('reads loop headers in order and skips comments and other blocks', () => {
    expect(loopNamesInText(text)).toEqual(['Upright', 'ΘHold']);
  });

  it('prefers the server symbols whose detail says loop', () => {
    const symbols = [
      { name: 'Boom', detail: 'plant' },
      { name: 'Second', detail: 'loop "from the server"' },
      { name: 'Upright', detail: 'loop' },
    ];
    expect(loopNames(symbols, text)).toEqual(['Second', 'Upright']);
  });

  it('falls back to the text when the server gives no symbols', () => {
    expect(loopNames(undefined, text)).toEqual(['Upright', 'ΘHold']);
    expect(loopNames([], 'plant P { }')).toEqual([]);
  });
});

describe('export file names and bytes', () => {
  it('makes a safe stem and keeps Unicode letters', () => {
    expect(fileStem('Upright')).toBe('Upright');
    expect(fileStem('θ loop/1')).toBe('θ_loop_1');
    expect(fileStem('///')).toBe('loop');
  });

  it('accepts PNG data URLs only', () => {
    const png = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1, 2, 3]);
    const bytes = pngBytes(`data:image/png;base64,${png.toString('base64')}`);
    expect(bytes && Array.from(bytes)).toEqual(Array.from(png));
    expect(pngBytes(`data:image/png;base64,${Buffer.from('GIF89a').toString('base64')}`)).toBeUndefined();
    expect(pngBytes('data:image/png;base64,@@@')).toBeUndefined();
  });
});
