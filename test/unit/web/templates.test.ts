import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import path from 'node:path';
import { VIEWS_DIR } from '../../../src/web/paths.ts';

function templates(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((d) => {
    const full = path.join(dir, d.name);
    if (d.isDirectory()) return templates(full);
    return d.name.endsWith('.ejs') ? [full] : [];
  });
}

// Output escaping (OWASP ASVS 5.0 §1.2, encoding at the point of output): every value goes through <%= %>.
// The only unescaped tag allowed is an include of another template.
const RAW_TAG = /<%-(?!\s*include\()/g;

describe('EJS templates', () => {
  const files = templates(VIEWS_DIR);

  it('exist', () => {
    expect(files.length).toBeGreaterThan(3);
  });

  it.each(files.map((f) => [path.relative(VIEWS_DIR, f), f]))('%s uses escaped output only', (_name, file) => {
    const text = fs.readFileSync(file, 'utf8');
    const offending = [...text.matchAll(RAW_TAG)].map((m) => text.slice(m.index, m.index + 40));
    expect(offending).toEqual([]);
    // No inline script and no inline event handlers: the CSP forbids them, so they would only break.
    expect(text).not.toMatch(/<script(?![^>]*\bsrc=)/i);
    expect(text).not.toMatch(/\son[a-z]+\s*=\s*["']/i);
  });

  it('the raw-tag check catches an unescaped value', () => {
    expect('<p><%- title %></p>'.match(RAW_TAG)).not.toBeNull();
    expect("<%- include('../layouts/top') %>".match(RAW_TAG)).toBeNull();
  });
});
