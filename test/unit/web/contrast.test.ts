import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { REPO_ROOT } from '../../helpers/server.ts';

/**
 * Colour contrast of the stylesheet's palette, computed with the WCAG 2.x formula:
 * relative luminance L = 0.2126 R + 0.7152 G + 0.0722 B over linearised sRGB channels
 * (c ≤ 0.04045 ? c/12.92 : ((c + 0.055)/1.055)^2.4), and ratio (L1 + 0.05)/(L2 + 0.05)
 * (WCAG 2.2, "relative luminance" and "contrast ratio" definitions).
 * Text needs 4.5:1 (SC 1.4.3 Contrast (Minimum), level AA); focus rings and control
 * edges need 3:1 against what is next to them (SC 1.4.11 Non-text Contrast).
 * The colours are read from src/web/public/style.css itself, so the test checks what ships.
 */
const css = fs.readFileSync(path.join(REPO_ROOT, 'src/web/public/style.css'), 'utf8');
const root = css.slice(css.indexOf(':root {'), css.indexOf('}', css.indexOf(':root {')));
const palette = new Map([...root.matchAll(/--([a-z-]+):\s*(#[0-9a-f]{6})\b/gi)].map((m) => [m[1]!, m[2]!.toLowerCase()]));

function colour(name: string): string {
  const hex = name.startsWith('#') ? name : palette.get(name);
  if (!hex) throw new Error(`no colour --${name} in style.css`);
  return hex;
}

function luminance(hex: string): number {
  const lin = (i: number) => {
    const c = parseInt(hex.slice(i, i + 2), 16) / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * lin(1) + 0.7152 * lin(3) + 0.0722 * lin(5);
}

export function contrast(a: string, b: string): number {
  const [hi, lo] = [luminance(colour(a)), luminance(colour(b))].sort((x, y) => y - x);
  return (hi! + 0.05) / (lo! + 0.05);
}

// [text colour, background] for every pairing the stylesheet uses for text.
const TEXT: [string, string][] = [
  ['ink', 'sheet'],
  ['ink', 'desk'],
  ['muted', 'sheet'],
  ['muted', 'desk'],
  ['lagoon', 'sheet'],
  ['lagoon', 'lagoon-wash'],
  ['lagoon-deep', 'sheet'],
  ['lagoon-deep', 'lagoon-wash'],
  ['on-lagoon', 'lagoon'],
  ['on-lagoon', 'lagoon-deep'],
  ['ink', 'note-wash'],
  ['note-ink', 'note-wash'],
  ['muted', 'note-wash'],
  ['lagoon', 'note-wash'],
  ['ink', 'heed-wash'],
  ['heed-ink', 'heed-wash'],
  ['muted', 'heed-wash'],
  ['lagoon', 'heed-wash'],
  ['ink', 'fault-wash'],
  ['fault-ink', 'fault-wash'],
  ['fault-ink', 'sheet'],
  ['muted', 'fault-wash'],
  ['lagoon', 'fault-wash'],
  ['ink', 'done-wash'],
  ['done-ink', 'done-wash'],
  ['muted', 'done-wash'],
  ['lagoon', 'done-wash'],
  ['sheet', 'fault-ink'],
  ['sheet', 'heed-ink'],
  ['sheet', 'note-ink'],
  ['sheet', 'done-ink'],
  ['ink', 'lagoon-wash'],
];

// [edge or ring, what it sits on]. The focus ring has a white gap on its inner side (box-shadow in the sheet
// colour), so it always meets the sheet there and the page's own background outside.
const NON_TEXT: [string, string][] = [
  ['plum', 'sheet'],
  ['plum', 'desk'],
  ['plum', 'fault-wash'],
  ['plum', 'heed-wash'],
  ['plum', 'note-wash'],
  ['edge', 'sheet'],
  ['edge', 'fault-wash'],
  ['fault-ink', 'fault-wash'],
  ['lagoon', 'sheet'],
];

describe('the palette meets WCAG 2.2 AA contrast', () => {
  it('reads every colour it checks from the stylesheet', () => {
    expect(palette.size).toBeGreaterThanOrEqual(20);
    for (const [a, b] of [...TEXT, ...NON_TEXT]) expect(() => [colour(a), colour(b)]).not.toThrow();
  });

  it('the formula gives the known values (control: it can fail)', () => {
    expect(contrast('#000000', '#ffffff')).toBeCloseTo(21, 6);
    expect(contrast('#ffffff', '#ffffff')).toBe(1);
    // #767676 on white is the lightest grey that passes 4.5:1 and #777777 the first to fail (from memory; 4.54 and 4.48).
    expect(contrast('#767676', '#ffffff')).toBeGreaterThanOrEqual(4.5);
    expect(contrast('#777777', '#ffffff')).toBeLessThan(4.5);
  });

  it.each(TEXT)('text %s on %s reaches 4.5:1 (SC 1.4.3)', (fg, bg) => {
    expect(contrast(fg, bg)).toBeGreaterThanOrEqual(4.5);
  });

  it.each(NON_TEXT)('edge %s against %s reaches 3:1 (SC 1.4.11)', (fg, bg) => {
    expect(contrast(fg, bg)).toBeGreaterThanOrEqual(3);
  });
});
