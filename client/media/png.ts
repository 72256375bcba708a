// Export PNG: the panels' canvases composed into one image on the theme background, with the
// loop name on top and each panel's title and curve key above it.

import uPlot from 'uplot';
import type { Panel } from './plots';
import type { Theme } from './theme';

export function composePng(title: string, panels: Panel[], theme: Theme): string {
  const px = uPlot.pxRatio;
  const line = Math.round(16 * px);
  const pad = Math.round(8 * px);
  const canvases = panels.map((p) => p.plot.ctx.canvas);
  const width = Math.max(320 * px, ...canvases.map((c) => c.width)) + 2 * pad;
  const height = pad + line + canvases.reduce((h, c) => h + 2 * line + c.height, 0) + pad;
  const out = document.createElement('canvas');
  out.width = width;
  out.height = height;
  const ctx = out.getContext('2d');
  if (!ctx) throw new Error('this browser cannot make a 2D canvas for the PNG export');
  ctx.fillStyle = theme.background;
  ctx.fillRect(0, 0, width, height);
  const font = (bold: boolean) => `${bold ? '600 ' : ''}${theme.font.replace(/^(\d+)px/, (_, n) => `${Math.round(Number(n) * px)}px`)}`;
  ctx.textBaseline = 'middle';
  ctx.fillStyle = theme.foreground;
  ctx.font = font(true);
  ctx.fillText(title, pad, pad + line / 2);
  let y = pad + line;
  panels.forEach((p, i) => {
    ctx.font = font(true);
    ctx.fillStyle = theme.foreground;
    ctx.fillText(p.root.querySelector('.lw-panel-title')?.textContent ?? p.group, pad, y + line / 2);
    // Curve key: a short line in each shown series' colour and dash, then its label.
    ctx.font = font(false);
    let x = pad;
    for (const m of p.series) {
      if (!m.show) continue;
      const label = `${m.signal} (${m.runLabel})`;
      const w = 18 * px + ctx.measureText(label).width + 12 * px;
      if (x + w > width - pad) break;
      ctx.strokeStyle = m.stroke;
      ctx.lineWidth = 2 * px;
      ctx.setLineDash(m.dash.map((d) => d * px));
      ctx.beginPath();
      ctx.moveTo(x, y + line * 1.5);
      ctx.lineTo(x + 14 * px, y + line * 1.5);
      ctx.stroke();
      ctx.setLineDash([]);
      ctx.fillStyle = theme.muted;
      ctx.fillText(label, x + 18 * px, y + line * 1.5);
      x += w;
    }
    y += 2 * line;
    ctx.drawImage(canvases[i], pad, y);
    y += canvases[i].height;
  });
  return out.toDataURL('image/png');
}
