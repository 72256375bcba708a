// CSV export of every run of a report (RFC 4180: comma separated, CRLF line ends, fields with a
// comma, quote or line break are quoted and inner quotes doubled).
//
// Layout: one header row, then the samples of every run one after another.
//   run,kind,sweep value,t [s],<signal 1> [unit],<signal 2> [unit],...
// - `run` is the run's label, `kind` is nonlinear | linear | sweep;
// - `sweep value` is the swept value in its display unit for sweep runs, empty otherwise;
// - the signal columns follow the report's signal list; a signal's header is `name [unit]`, or
//   just `name` when dimensionless; values are in display units;
// - a cell is empty when the run has no such signal or the sample is missing (null).
// Numbers are written with JavaScript's shortest round-trip form, so parsing them back gives the
// exact values that were plotted.

import type { LoopRunReport } from '../../language/src/protocol';
import { labelWithUnit } from './format';

export function csvField(s: string): string {
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

const num = (v: number | null | undefined): string => (v === null || v === undefined ? '' : String(v));

export function reportToCsv(report: LoopRunReport): string {
  const header = ['run', 'kind', 'sweep value', 't [s]', ...report.signals.map((s) => labelWithUnit(s.name, s.unit))];
  const lines: string[] = [header.map(csvField).join(',')];
  for (const run of report.runs) {
    const prefix = `${csvField(run.label)},${run.kind},${num(run.sweep?.value)},`;
    const cols = report.signals.map((s) => run.signals[s.name]);
    for (let i = 0; i < run.t.length; i++) {
      let line = prefix + num(run.t[i]);
      for (const c of cols) line += ',' + (c ? num(c[i]) : '');
      lines.push(line);
    }
  }
  return lines.join('\r\n') + '\r\n';
}

/** Parses RFC 4180 text into rows of fields (used to check exports; tolerant of LF endings). */
export function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quoted) {
      if (c === '"') {
        if (text[i + 1] === '"') { field += '"'; i++; } else quoted = false;
      } else field += c;
    } else if (c === '"') quoted = true;
    else if (c === ',') { row.push(field); field = ''; }
    else if (c === '\n' || c === '\r') {
      if (c === '\r' && text[i + 1] === '\n') i++;
      row.push(field); rows.push(row); row = []; field = '';
    } else field += c;
  }
  if (field !== '' || row.length > 0) { row.push(field); rows.push(row); }
  return rows;
}
