// The pure parts of the plot page: message and report checks, CSV, the page HTML and its CSP,
// and the palette's colour-vision and contrast properties.
import { describe, expect, test } from 'vitest';
import { parseCsv, reportToCsv } from '../../client/media/csv';
import { fmt } from '../../client/media/format';
import { parseHostMessage, parsePageMessage, parseState } from '../../client/media/messages';
import { CATEGORICAL, SEQUENTIAL, sequential, parseHex } from '../../client/media/palette';
import { validateReport } from '../../client/media/validate';
import { createNonce, escapeHtml, inlineJson, plotPageCsp, plotPageHtml, reportPageHtml } from '../../client/src/page';
import { compareReport, simulateReport, sweepReport } from './fixtures';

describe('report and message checks', () => {
  test('accepts the fixtures and returns the same object', () => {
    for (const r of [simulateReport(), compareReport(), sweepReport()]) {
      const v = validateReport(r);
      expect(v.ok).toBe(true);
      if (v.ok) expect(v.value).toBe(r);
    }
  });

  test('names the first offending field', () => {
    const bad = (edit: (r: any) => void) => {
      const r = simulateReport() as any;
      edit(r);
      const v = validateReport(r);
      return v.ok ? 'ok' : v.error;
    };
    expect(bad((r) => delete r.loop)).toBe('loop must be a string, got nothing');
    expect(bad((r) => (r.signals[1].group = 3))).toBe('signals[1].group must be a string, got number 3');
    expect(bad((r) => (r.signals[3].limit = { lo: 2, hi: 1 }))).toBe('signals[3].limit has lo 2 above hi 1');
    expect(bad((r) => (r.runs[0].kind = 'fast'))).toBe("runs[0].kind must be one of 'nonlinear', 'linear', 'sweep', got string \"fast\"");
    expect(bad((r) => (r.runs[0].signals['Boom.tilt'][5] = 'x'))).toBe('runs[0].signals["Boom.tilt"][5] must be a finite number or null, got string "x"');
    expect(bad((r) => (r.runs[0].signals['Boom.tilt'][5] = null))).toBe('ok');
    expect(bad((r) => (r.runs[0].atLimit['Steady.drive'] = [[1]]))).toBe('runs[0].atLimit["Steady.drive"][0] must be a pair [t0, t1], got an array');
    expect(bad((r) => (r.runs[0].expects[0].pass = 'yes'))).toBe('runs[0].expects[0].pass must be true or false, got string "yes"');
    expect(bad((r) => r.signals.push({ ...r.signals[0] }))).toBe('signals lists "Boom.tilt" twice');
    expect(validateReport(null)).toEqual({ ok: false, error: 'report must be an object, got null' });
  });

  test('host and page messages are checked both ways', () => {
    expect(parseHostMessage({ type: 'theme' })).toEqual({ ok: true, value: { type: 'theme' } });
    expect(parseHostMessage({ type: 'status', kind: 'error', message: 'm', line: 3 })).toEqual({ ok: true, value: { type: 'status', kind: 'error', message: 'm', line: 3 } });
    expect(parseHostMessage({ type: 'status', kind: 'error', line: 0 }).ok).toBe(false);
    expect(parseHostMessage([]).ok).toBe(false);
    // a report may carry the document version it was computed from; knob edits are answered
    expect(parseHostMessage({ type: 'edited', version: 7 })).toEqual({ ok: true, value: { type: 'edited', version: 7 } });
    expect(parseHostMessage({ type: 'edited', version: -1 })).toEqual({ ok: false, error: 'edited: version must be a non-negative integer, got number -1' });
    expect(parseHostMessage({ type: 'edited' }).ok).toBe(false);
    const report = simulateReport();
    const versioned = parseHostMessage({ type: 'report', report, version: 12 });
    expect(versioned.ok && versioned.value.type === 'report' && versioned.value.version).toBe(12);
    const plain = parseHostMessage({ type: 'report', report });
    expect(plain.ok && plain.value.type === 'report' && 'version' in plain.value).toBe(false);
    expect(parseHostMessage({ type: 'report', report, version: '12' })).toEqual({ ok: false, error: 'report: version must be a non-negative integer, got string "12"' });
    expect(parseHostMessage({ type: 'edited', version: 1.5 }).ok).toBe(false);
    expect(parsePageMessage({ type: 'ready' })).toEqual({ ok: true, value: { type: 'ready' } });
    expect(parsePageMessage({ type: 'exportPng', dataUrl: 'javascript:alert(1)' }).ok).toBe(false);
    expect(parsePageMessage({ type: 'editParam', name: 'Steady.kp', span: { start: 4, end: 9 }, newText: '2.5', final: true })).toEqual({
      ok: true,
      value: { type: 'editParam', name: 'Steady.kp', span: { start: 4, end: 9 }, newText: '2.5', final: true },
    });
    expect(parsePageMessage({ type: 'editParam', name: 'k', span: { start: 9, end: 4 }, newText: '', final: false }).ok).toBe(false);
  });

  test('a saved state is restored only when its report is valid; bad zoom and hidden are dropped', () => {
    const report = simulateReport();
    expect(parseState({ report, zoom: { min: 1, max: 2 }, hidden: { signals: ['target'], runs: [] } })).toEqual({ report, zoom: { min: 1, max: 2 }, hidden: { signals: ['target'], runs: [] } });
    expect(parseState({ report, zoom: { min: 2, max: 1 }, hidden: { signals: [1] } })).toEqual({ report, zoom: null, hidden: { signals: [], runs: [] } });
    expect(parseState({ report: { loop: 'x' } })).toBeNull();
    expect(parseState(undefined)).toBeNull();
  });
});

describe('CSV', () => {
  test('round-trips every sample exactly, with quoting of awkward labels', () => {
    const r = sweepReport(30);
    r.runs[0].label = 'a "quoted", label';
    r.runs[1].signals['Boom.tilt'][3] = null as unknown as number;
    const rows = parseCsv(reportToCsv(r));
    expect(rows[0]).toEqual(['run', 'kind', 'sweep value', 't [s]', 'Boom.tilt [rad]', 'target [rad]', 'Boom.rate [rad/s]']);
    expect(rows[1][0]).toBe('a "quoted", label');
    expect(rows[1][2]).toBe(String(r.runs[0].sweep!.value));
    expect(rows[30 + 4][4]).toBe('');
    let k = 1;
    for (const run of r.runs)
      for (let i = 0; i < run.t.length; i++, k++) {
        expect(Number(rows[k][3])).toBe(run.t[i]);
        r.signals.forEach((s, j) => {
          const v = run.signals[s.name][i];
          expect(rows[k][4 + j]).toBe(v === null ? '' : String(v));
        });
      }
    expect(rows.length).toBe(k);
  });
});

describe('page HTML', () => {
  const assets = { script: 'https://file+.vscode-resource.vscode-cdn.net/ext/dist/media/plot.js', style: 'https://x/style.css', uplotStyle: 'https://x/uPlot.min.css' };

  test('has the production CSP with a fresh nonce per render and only nonce\'d scripts', () => {
    const a = createNonce();
    const b = createNonce();
    expect(a).not.toBe(b);
    expect(a).toMatch(/^[A-Za-z0-9_-]{22}$/);
    const html = plotPageHtml({ assets, nonce: a, cspSource: 'https://*.vscode-cdn.net' });
    const csp = `default-src 'none'; img-src https://*.vscode-cdn.net data:; style-src https://*.vscode-cdn.net 'nonce-${a}'; script-src 'nonce-${a}'; font-src https://*.vscode-cdn.net`;
    expect(plotPageCsp(a, 'https://*.vscode-cdn.net')).toBe(csp);
    expect(html).toContain(`<meta http-equiv="Content-Security-Policy" content="${escapeHtml(csp)}">`);
    const scripts = html.match(/<script\b[^>]*>/g)!;
    expect(scripts).toEqual([`<script nonce="${a}" src="${assets.script}"></script>`.replace('</script>', '').replace(/>$/, '>')]);
    expect(html).not.toMatch(/\son[a-z]+=/i);
  });

  test('escapes what it interpolates and refuses unsafe nonces and CSP sources', () => {
    const html = plotPageHtml({ assets: { ...assets, style: 'x"><script>alert(1)</script>' }, nonce: createNonce(), cspSource: 'https://a', title: '<b>t</b>' });
    expect(html).not.toContain('<script>alert(1)');
    expect(html).toContain('<title>&lt;b&gt;t&lt;/b&gt;</title>');
    expect(() => plotPageHtml({ assets, nonce: 'short', cspSource: 'https://a' })).toThrow(/nonce/);
    expect(() => plotPageHtml({ assets, nonce: createNonce(), cspSource: "https://a; script-src 'unsafe-inline'" })).toThrow(/CSP source/);
    expect(() => plotPageHtml({ assets, nonce: '"><script>', cspSource: 'https://a' })).toThrow(/nonce/);
  });

  test('the self-contained report inlines script, styles and data safely', () => {
    const r = simulateReport();
    r.loop = '</script><script>alert(1)</script>';
    const html = reportPageHtml({ report: r, script: 'console.log("</script>")', styles: ['a{}', 'b{}</style><i>'] });
    expect(html.match(/<\/script>/g)!.length).toBe(2);
    expect(html).not.toContain('<script>alert(1)');
    expect(html).not.toContain('</style><i>');
    expect(html).not.toMatch(/https?:|src=|href=/);
    const json = /<script type="application\/json" id="lw-report-data">(.*?)<\/script>/s.exec(html)![1];
    expect(JSON.parse(json)).toEqual(r);
    expect(JSON.parse(inlineJson({ s: '<&>\u2028' }))).toEqual({ s: '<&>\u2028' });
    const nonce = /<style nonce="([^"]+)">/.exec(html)![1];
    expect(html).toContain(escapeHtml(`default-src 'none'; img-src data: blob:; style-src 'nonce-${nonce}'; script-src 'nonce-${nonce}'`));
    expect(html).not.toContain('unsafe-');
  });
});

// Colour-vision simulation for the palette check: Viénot, Brettel & Mollon (1999) dichromat
// matrices in linear sRGB; distances are CIE76 ΔE in CIELAB (D65).
const lin = (c: number) => (c / 255 <= 0.04045 ? c / 255 / 12.92 : ((c / 255 + 0.055) / 1.055) ** 2.4);
const gam = (c: number) => 255 * (Math.min(1, Math.max(0, c)) <= 0.0031308 ? 12.92 * Math.max(0, c) : 1.055 * Math.min(1, c) ** (1 / 2.4) - 0.055);
const VISION: Record<string, number[][]> = {
  normal: [[1, 0, 0], [0, 1, 0], [0, 0, 1]],
  protanopia: [[0.11238, 0.88762, 0], [0.11238, 0.88762, 0], [0.00401, -0.00401, 1]],
  deuteranopia: [[0.29275, 0.70725, 0], [0.29275, 0.70725, 0], [-0.02234, 0.02234, 1]],
};
function simulate(hex: string, m: number[][]): number[] {
  const l = parseHex(hex).map(lin);
  return m.map((row) => gam(row[0] * l[0] + row[1] * l[1] + row[2] * l[2]));
}
function lab(rgb: number[]): number[] {
  const [r, g, b] = rgb.map(lin);
  const f = (t: number) => (t > 216 / 24389 ? Math.cbrt(t) : ((24389 / 27) * t + 16) / 116);
  const x = f((0.4124 * r + 0.3576 * g + 0.1805 * b) / 0.95047);
  const y = f(0.2126 * r + 0.7152 * g + 0.0722 * b);
  const z = f((0.0193 * r + 0.1192 * g + 0.9505 * b) / 1.08883);
  return [116 * y - 16, 500 * (x - y), 200 * (y - z)];
}
const luminance = (hex: string) => {
  const [r, g, b] = parseHex(hex).map(lin);
  return 0.2126 * r + 0.7152 * g + 0.0722 * b;
};
const contrast = (a: string, b: string) => (Math.max(luminance(a), luminance(b)) + 0.05) / (Math.min(luminance(a), luminance(b)) + 0.05);

describe('palette', () => {
  const backgrounds = { dark: ['#1e1e1e', '#252526', '#000000'], light: ['#ffffff', '#f3f3f3'] } as const;

  for (const variant of ['dark', 'light'] as const) {
    test(`${variant}: every pair of series colours stays apart under protanopia and deuteranopia`, () => {
      const colours = CATEGORICAL[variant];
      for (const [vision, m] of Object.entries(VISION)) {
        for (let i = 0; i < colours.length; i++)
          for (let j = i + 1; j < colours.length; j++) {
            const d = Math.hypot(...lab(simulate(colours[i], m)).map((v, k) => v - lab(simulate(colours[j], m))[k]));
            expect(d, `${vision}: ${colours[i]} vs ${colours[j]}`).toBeGreaterThan(14);
          }
      }
    });

    test(`${variant}: series and sweep colours keep 3:1 contrast against the background`, () => {
      const sweep = Array.from({ length: 11 }, (_, i) => sequential(i / 10, variant));
      for (const bg of backgrounds[variant]) for (const c of [...CATEGORICAL[variant], ...sweep]) expect(contrast(c, bg), `${c} on ${bg}`).toBeGreaterThanOrEqual(3);
    });

    test(`${variant}: the sweep scale rises monotonically in lightness, end to end`, () => {
      const L = Array.from({ length: 21 }, (_, i) => lab(parseHex(sequential(i / 20, variant)))[0]);
      for (let i = 1; i < L.length; i++) expect(L[i]).toBeGreaterThan(L[i - 1]);
      expect(sequential(0, variant)).toBe(SEQUENTIAL[variant][0]);
      expect(sequential(1, variant)).toBe(SEQUENTIAL[variant][2]);
      expect(L[20] - L[0]).toBeGreaterThan(30);
    });
  }
});

test('number formatting', () => {
  expect(fmt(0.30917)).toBe('0.3092');
  expect(fmt(1.5)).toBe('1.5');
  expect(fmt(123456)).toBe('1.235e+5');
  expect(fmt(0.0001234)).toBe('1.234e-4');
  expect(fmt(null)).toBe('—');
  expect(fmt(0)).toBe('0');
});
