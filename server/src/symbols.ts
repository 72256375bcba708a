// The document outline: blocks, and inside each block its members.

import type { Analysis } from '../../language/src/analysis';
import { pathText, type Block, type LoopMember, type SystemMember } from '../../language/src/syntax/ast';
import type { OutlineNode } from './convert';

function unit(u: { text: string } | undefined): string | undefined {
  return u ? `[${u.text}]` : undefined;
}

function one(text: string, m: SystemMember | LoopMember): OutlineNode | undefined {
  const src = (s: { start: number; end: number }) => text.slice(s.start, s.end).replace(/\s+/g, ' ').trim();
  const node = (name: string, kind: OutlineNode['kind'], selection: { start: number; end: number }, detail?: string): OutlineNode => ({ name, kind, span: m.span, selection, detail });
  switch (m.kind) {
    case 'param':
      return node(m.name.name, 'param', m.name.span, src(m.value.span));
    case 'let':
      return node(m.name.name, 'let', m.name.span, src(m.value.span));
    case 'state':
      return node(m.name.name, 'state', m.name.span, unit(m.unit));
    case 'input':
      return node(m.name.name, 'input', m.name.span, unit(m.unit));
    case 'output':
      return node(m.name.name, 'output', m.name.span, unit(m.unit));
    case 'derivEq':
      return node(`${m.target.name}'`, 'equation', m.target.span, src(m.value.span));
    case 'transfer':
      return node(`${m.output.name} / ${m.input.name}`, 'relation', m.output.span, src(m.value.span));
    case 'linear':
      return node('linear', 'relation', m.keywordSpan);
    case 'pid':
      return node(`pid ${m.output.name} from ${m.input.name}`, 'relation', m.output.span);
    case 'limit':
      return node(`limit ${m.target.name}`, 'limit', m.target.span, `${src(m.lo.span)} .. ${src(m.hi.span)}`);
    case 'operatingPoint':
      return node(m.name.name, 'point', m.name.span, 'operating point');
    case 'sample':
      return node('sample', 'sample', m.span, src(m.period.span));
    case 'signal':
      return node(m.name.name, 'signal', m.name.span, src(m.value.span));
    case 'arrow':
      return node(`→ ${pathText(m.target)}`, 'arrow', m.targetSpan, src(m.source.span));
    case 'use':
      return node(m.name.name, 'use', m.name.span, m.system.name);
    case 'around':
      return node(`around ${pathText(m.target)}`, 'run', m.span);
    case 'start':
      return node(`start ${pathText(m.target)}`, 'run', m.span, src(m.value.span));
    case 'simulate':
      return node('simulate', 'run', m.span, src(m.duration.span));
    case 'compare':
      return node('compare linear', 'run', m.span);
    case 'sweepStart':
      return node(`sweep start ${pathText(m.target)}`, 'run', m.span, `${m.values.length} values`);
    case 'sweepParam':
      return node(`sweep ${pathText(m.target)}`, 'run', m.span, `${src(m.lo.span)} .. ${src(m.hi.span)}`);
    case 'show':
      return node('show', 'run', m.span, m.signals.map((s) => src(s.span)).join(', '));
    case 'expect':
      return node('expect', 'expect', m.span, src(m.test.span));
    case 'solveAlgebraic':
      return node('solve algebraic', 'run', m.span);
  }
}

function blockNode(text: string, b: Block): OutlineNode {
  const children: OutlineNode[] = [];
  for (const m of b.members as Array<SystemMember | LoopMember>) {
    const n = one(text, m);
    if (n && n.span.end > n.span.start) children.push(n);
  }
  return { name: b.name.name, kind: b.kind, span: b.span, selection: b.name.span, detail: b.description?.text ?? b.kind, children };
}

export function outline(a: Analysis): OutlineNode[] {
  return a.ast.blocks.filter((b) => b.span.end > b.span.start).map((b) => blockNode(a.text, b));
}
