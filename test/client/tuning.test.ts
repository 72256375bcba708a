import { describe, expect, it } from 'vitest';
import { isLiteralText, parseLiveReport, parseLiveStatus, refuseKnobEdit, UndoGroups } from '../../client/src/tuning';

const TEXT = 'controller Steady {\n  param kp = 14 [N*m/rad]\n  param kd = 2.2 [N*m*s/rad]\n}\n';
const kpSpan = () => {
  const start = TEXT.indexOf('14 [');
  return { start, end: TEXT.indexOf(']', start) + 1 };
};

describe('knob edits', () => {
  it('literals: numbers in every style, with or without their unit', () => {
    for (const t of ['14', '14 [N*m/rad]', '2.2[N*m*s/rad]', '.5', '1e-3 [s]', '2.5E+2', '-10 [degC]', '- 4 [N*m]', '3.'] as const) expect(isLiteralText(t), t).toBe(true);
    for (const t of ['', 'kp', '14 [N*m', '14 [a] [b]', '14\n[s]', '1 + 2', 'e5', '[s]', '14 [s]x'] as const) expect(isLiteralText(t), t).toBe(false);
  });

  it('an edit of the literal at its span is allowed', () => {
    expect(refuseKnobEdit(TEXT, kpSpan(), '15.2 [N*m/rad]')).toBeUndefined();
    expect(refuseKnobEdit(TEXT, { start: kpSpan().start, end: kpSpan().start + 2 }, '15')).toBeUndefined();
  });

  it('an edit whose span no longer holds a literal, lies outside the text, or whose new text is not a number is refused', () => {
    const s = kpSpan();
    expect(refuseKnobEdit(TEXT, { start: s.start - 5, end: s.end }, '15 [N*m/rad]')).toMatch(/no longer a number/);
    expect(refuseKnobEdit(TEXT, { start: s.start, end: TEXT.length + 3 }, '15')).toMatch(/outside the document/);
    expect(refuseKnobEdit(TEXT, { start: 10, end: 5 }, '15')).toMatch(/outside/);
    expect(refuseKnobEdit(TEXT, s, 'kp * 2')).toMatch(/not a number/);
    expect(refuseKnobEdit(TEXT, s, '15 [N*m/rad]\nplant X {}')).toMatch(/not a number/);
  });

  it('a drag is one undo step; each lone final edit is its own; panels group separately', () => {
    const g = new UndoGroups();
    expect(g.next('a', false)).toEqual({ undoStopBefore: true, undoStopAfter: false });
    expect(g.next('a', false)).toEqual({ undoStopBefore: false, undoStopAfter: false });
    expect(g.next('b', true)).toEqual({ undoStopBefore: true, undoStopAfter: true });
    expect(g.next('a', false)).toEqual({ undoStopBefore: false, undoStopAfter: false });
    expect(g.isOpen('a')).toBe(true);
    expect(g.next('a', true)).toEqual({ undoStopBefore: false, undoStopAfter: true });
    expect(g.isOpen('a')).toBe(false);
    expect(g.next('a', true)).toEqual({ undoStopBefore: true, undoStopAfter: true });
    g.next('a', false);
    g.close('a');
    expect(g.next('a', false).undoStopBefore).toBe(true);
  });

  it('a drag whose document changed between two of its edits (an undo, typing) is seen as changed under it', () => {
    const g = new UndoGroups();
    // no edit has landed yet: nothing to compare with
    g.next('a', false);
    expect(g.changedUnder('a', 7)).toBe(false);
    g.landed('a', 8);
    expect(g.changedUnder('a', 8)).toBe(false);
    g.next('a', false);
    g.landed('a', 9);
    // the user pressed Ctrl+Z: the version moved on without an edit of the drag
    expect(g.changedUnder('a', 10)).toBe(true);
    // other panels are not affected
    g.next('b', false);
    g.landed('b', 3);
    expect(g.changedUnder('b', 3)).toBe(false);
    // once closed (or finished), a group compares nothing
    g.close('a');
    expect(g.changedUnder('a', 10)).toBe(false);
    g.next('b', true);
    g.landed('b', 4);
    expect(g.changedUnder('b', 99)).toBe(false);
    expect(g.isOpen('b')).toBe(false);
  });
});

describe('live pushes from the server', () => {
  const report = { loop: 'Upright', signals: [], runs: [], warnings: [] };
  it('a report push is checked field by field', () => {
    expect(parseLiveReport({ uri: 'file:///a.loop', loop: 'Upright', version: 3, report })).toMatchObject({ version: 3, report: { loop: 'Upright' } });
    expect(parseLiveReport({ uri: 'file:///a.loop', loop: 'Upright', version: 3, report: { loop: 5 } })).toBeUndefined();
    expect(parseLiveReport({ uri: 'file:///a.loop', loop: 'Upright', version: 'x', report })).toBeUndefined();
    expect(parseLiveReport(null)).toBeUndefined();
  });

  it('a status push keeps a valid line and drops a bad one', () => {
    const base = { uri: 'file:///a.loop', loop: 'Upright', version: 4, kind: 'error', message: 'LW201 unknown name kx' };
    expect(parseLiveStatus({ ...base, line: 30 })).toEqual({ ...base, line: 30 });
    expect(parseLiveStatus({ ...base, line: 0 })).toEqual(base);
    expect(parseLiveStatus({ ...base, line: 2.5 })).toEqual(base);
    expect(parseLiveStatus({ ...base, kind: 'idle' })).toBeUndefined();
    expect(parseLiveStatus({ ...base, message: 7 })).toBeUndefined();
  });

  it('a running push needs no message and carries none', () => {
    const base = { uri: 'file:///a.loop', loop: 'Upright', version: 4 };
    expect(parseLiveStatus({ ...base, kind: 'running', message: '' })).toEqual({ ...base, kind: 'running', message: '' });
    expect(parseLiveStatus({ ...base, kind: 'running' })).toEqual({ ...base, kind: 'running', message: '' });
    expect(parseLiveStatus({ ...base, kind: 'running', line: 3, message: 'x' })).toEqual({ ...base, kind: 'running', message: '' });
  });
});
