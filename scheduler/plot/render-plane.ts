/**
 * Draws one plane as a standalone SVG: Observable Plot (rendered in linkedom) draws the marks and
 * the axes; this module composes the plot with a header (title, survivor / excluded key, colour
 * bar, curve key) and physics-notation axis labels with real subscripts, in one <svg> that resvg
 * and browsers both read. Colour maps are viridis (values) and cividis (point counts): both rise
 * monotonically in lightness, so they read in greyscale and for the common colour-vision
 * deficiencies. Survivors are opaque filled circles; excluded points are faint crosses (binned and
 * grid cells: opaque when the cell holds a survivor, faded when it holds only excluded points).
 */
import * as Plot from '@observablehq/plot';
import { parseHTML } from 'linkedom';
import type { PlaneData, AxisInfo, Cell, ScatterPoint } from './plane-data.js';
import { labelTspans, labelText, formatPowerOfTen, formatLinear, escapeXml } from './notation.js';

export const FONT_FAMILY = 'DejaVu Sans';
/** Knob: default picture size in SVG user units (px); PNGs are rendered at a multiple of it. */
export const DEFAULT_WIDTH = 720;
export const DEFAULT_HEIGHT = 540;
/** Height of the header band above the plot (title, keys, colour bar). */
const HEADER_PX = 96;
/** Baseline of the key row (status key, curve keys) and the height of each further key row. */
const KEY_ROW_Y = 84;
const KEY_ROW_PX = 16;
const MARGIN = { left: 84, right: 22, top: 10, bottom: 44 } as const;
const EXCLUDED_OPACITY = 0.35;
const FADED_CELL_OPACITY = 0.28;
const NO_VALUE_GREY = '#9a9a9a';

/** A curve drawn over the data, in data coordinates (limit curves, the relic-target contour). */
export interface Overlay {
  readonly label: string;
  readonly lines: readonly (readonly { x: number; y: number }[])[];
  /** short text written beside the line in the plot (default: the label) */
  readonly tag?: string;
  /** SVG stroke-dasharray, or null for a solid line (limit curves solid, relic lines dashed) */
  readonly dash: string | null;
}

export interface RenderOptions {
  /** what the picture shows, e.g. the scan name; the plane's labels are appended */
  readonly title: string;
  /** short lines printed under the title (counts, what was omitted and why) */
  readonly notes: readonly string[];
  readonly overlays: readonly Overlay[];
  readonly width?: number;
  readonly height?: number;
  /** provenance stored in the SVG's <metadata> (scan, spec hash, code version, constraint set...) */
  readonly provenance?: Readonly<Record<string, string | number | boolean | null>>;
}

/** The part of a linkedom element this module touches (the project compiles without DOM types). */
interface SvgElement {
  querySelector(selector: string): { remove(): void } | null;
  setAttribute(name: string, value: string): void;
  removeAttribute(name: string): void;
  readonly outerHTML: string;
}

/** A fresh linkedom document for Plot to build into (typed loosely for the same reason). */
function newDocument(): never {
  return parseHTML('<!doctype html><html><body></body></html>').document as never;
}

/** Tick values for a log axis: powers of ten, thinned to at most `max`; 1-2-5 steps in short ranges. */
function logTicks([lo, hi]: [number, number], max = 8): number[] {
  const e0 = Math.ceil(Math.log10(lo) - 1e-9);
  const e1 = Math.floor(Math.log10(hi) + 1e-9);
  if (e1 - e0 + 1 >= 2) {
    const step = Math.ceil((e1 - e0 + 1) / max);
    const out: number[] = [];
    for (let e = e0; e <= e1; e += step) out.push(10 ** e);
    return out;
  }
  const out: number[] = [];
  for (let e = e0 - 1; e <= e1 + 1; e++) for (const m of [1, 2, 5]) {
    const v = m * 10 ** e;
    if (v >= lo && v <= hi) out.push(v);
  }
  return out;
}

function tickFormat(v: number): string {
  const e = Math.log10(v);
  return Math.abs(e - Math.round(e)) < 1e-9 ? formatPowerOfTen(v) : formatLinear(v);
}

function axisOptions(axis: AxisInfo): Record<string, unknown> {
  const common = { domain: axis.domain, label: null, nice: false };
  if (axis.type === 'log') return { ...common, type: 'log', ticks: logTicks(axis.domain), tickFormat };
  return { ...common, type: 'linear', ticks: 6, tickFormat: formatLinear };
}

function colorOptions(data: PlaneData): Record<string, unknown> {
  if (data.color) {
    return { type: data.color.type, scheme: 'viridis', domain: data.color.domain, unknown: NO_VALUE_GREY };
  }
  if (data.mode !== 'scatter') {
    const max = Math.max(1, ...data.cells.map((c) => c.n));
    return { type: max > 30 ? 'log' : 'linear', scheme: 'cividis', domain: [1, Math.max(2, max)] };
  }
  return { type: 'linear', scheme: 'viridis', domain: [0, 1] };
}

/** Status colours when there is no colour quantity: two ends of cividis, far apart in lightness. */
const STATUS_FILL = { survives: '#00204c', excluded: '#a69d75', unjudged: '#5d6d7e' } as const;

function dataMarks(data: PlaneData): Plot.Markish[] {
  const marks: Plot.Markish[] = [];
  if (data.mode === 'scatter') {
    const fillOf = (p: ScatterPoint): string | number | null =>
      data.color ? p.c : STATUS_FILL[p.status];
    const excluded = data.points.filter((p) => p.status === 'excluded');
    const drawnFirst = data.points.filter((p) => p.status === 'unjudged');
    const survivors = data.points.filter((p) => p.status === 'survives');
    const r = data.points.length > 2000 ? 2 : 3.2;
    if (excluded.length) {
      marks.push(Plot.dot(excluded, {
        x: 'x', y: 'y', symbol: 'times', r, stroke: fillOf, strokeOpacity: EXCLUDED_OPACITY, strokeWidth: 1.2,
        ariaDescription: 'excluded',
      }));
    }
    if (drawnFirst.length) {
      marks.push(Plot.dot(drawnFirst, { x: 'x', y: 'y', symbol: 'circle', r, stroke: fillOf, fill: 'none', ariaDescription: 'unjudged' }));
    }
    if (survivors.length) {
      marks.push(Plot.dot(survivors, {
        x: 'x', y: 'y', symbol: 'circle', r, fill: fillOf, stroke: 'white', strokeWidth: 0.4, ariaDescription: 'survivors',
      }));
    }
    return marks;
  }
  const fillOf = (c: Cell): string | number | null => (data.color ? c.c : data.judged && data.mode === 'grid' ? STATUS_FILL[c.nSurvive > 0 ? 'survives' : 'excluded'] : c.n);
  const opacityOf = (c: Cell): number => (!data.judged || c.nSurvive > 0 ? 1 : FADED_CELL_OPACITY);
  marks.push(Plot.rect(data.cells, {
    x1: 'x1', x2: 'x2', y1: 'y1', y2: 'y2', fill: fillOf, fillOpacity: opacityOf, inset: 0, shapeRendering: 'crispEdges', ariaDescription: 'cells',
  }));
  return marks;
}

/** Where a value sits across an axis domain, 0 at the start and 1 at the end (in scale space). */
function scaleFraction(axis: AxisInfo, v: number): number {
  const [a, b] = axis.domain;
  return axis.type === 'log' ? Math.log(v / a) / Math.log(b / a) : (v - a) / (b - a);
}

/** Points between a line's vertices (straight in the axes' scale space), for placing its label. */
function densify(line: readonly { x: number; y: number }[], x: AxisInfo, y: AxisInfo, perSegment = 16): { x: number; y: number }[] {
  const lerp = (type: AxisInfo['type'], a: number, b: number, t: number): number =>
    type === 'log' && a > 0 && b > 0 ? a * (b / a) ** t : a + (b - a) * t;
  const out: { x: number; y: number }[] = [];
  for (let k = 0; k + 1 < line.length; k++) {
    const p = line[k] as { x: number; y: number };
    const q = line[k + 1] as { x: number; y: number };
    for (let s = 0; s < perSegment; s++) out.push({ x: lerp(x.type, p.x, q.x, s / perSegment), y: lerp(y.type, p.y, q.y, s / perSegment) });
  }
  if (line.length > 0) out.push(line[line.length - 1] as { x: number; y: number });
  return out;
}

function overlayMarks(overlays: readonly Overlay[], x: AxisInfo, y: AxisInfo): Plot.Markish[] {
  const marks: Plot.Markish[] = [];
  const inside = (p: { x: number; y: number }): boolean =>
    p.x >= x.domain[0] && p.x <= x.domain[1] && p.y >= y.domain[0] && p.y <= y.domain[1];
  overlays.forEach((o, k) => {
    const rows = o.lines.flatMap((line, li) => line.map((p) => ({ ...p, z: `${k}:${li}` })));
    if (rows.length === 0) return;
    const dash = o.dash ?? undefined;
    marks.push(Plot.line(rows, { x: 'x', y: 'y', z: 'z', stroke: 'white', strokeWidth: 4, strokeOpacity: 0.85, clip: true }));
    marks.push(Plot.line(rows, {
      x: 'x', y: 'y', z: 'z', stroke: 'black', strokeWidth: 1.6, strokeDasharray: dash, clip: true, ariaDescription: `curve ${o.label}`,
    }));
    // label at the visible point farthest along the longest line, nudged inward
    const longest = [...o.lines].sort((a, b) => b.length - a.length)[0] ?? [];
    const visible = densify(longest, x, y).filter(inside);
    // prefer points away from the frame so the text is not cut at the edge
    const central = visible.filter((p) => {
      const fx = scaleFraction(x, p.x);
      const fy = scaleFraction(y, p.y);
      return fx > 0.15 && fx < 0.85 && fy > 0.06 && fy < 0.92;
    });
    const pool = central.length > 0 ? central : visible;
    const anchor = pool[Math.floor(pool.length * (0.35 + 0.2 * (k % 3)))];
    if (anchor) {
      marks.push(Plot.text([anchor], {
        x: 'x', y: 'y', text: () => o.tag ?? o.label, dy: -9, fontSize: 11, fill: 'black', stroke: 'white', strokeWidth: 3,
        paintOrder: 'stroke', ariaDescription: `curve label ${o.label}`,
      }));
    }
  });
  return marks;
}

/** Places a Plot-made <svg> at (x, y) inside the composed picture, keeping its own attributes. */
function placed(svg: SvgElement, x: number, y: number): string {
  svg.querySelector('style')?.remove();
  svg.setAttribute('font-family', FONT_FAMILY);
  svg.removeAttribute('class');
  svg.setAttribute('x', String(x));
  svg.setAttribute('y', String(y));
  return trimCoordinates(svg.outerHTML);
}

/**
 * Rounds coordinates in geometry attributes to 0.1 px (PNGs are drawn at 2x, so 0.05 px at most),
 * which shortens Plot's output by about a third. Text and labels are untouched.
 */
function trimCoordinates(svg: string): string {
  const edgesKept = svg.replace(/<rect\b[^>]*>/g, roundRectEdges);
  return edgesKept.replace(/ (x|y|x1|x2|y1|y2|cx|cy|width|height|d|transform)="([^"]*)"/g,
    (_m, name: string, value: string) => ` ${name}="${value.replace(/(\d\.\d)\d+/g, '$1')}"`);
}

/**
 * Rounds a rect's edges rather than its position and size, so neighbouring cells still share
 * their edge exactly (rounding x and width apart leaves hairline gaps between heat-map cells).
 */
function roundRectEdges(tag: string): string {
  const attr = (name: string): number | null => {
    const m = new RegExp(` ${name}="([^"]*)"`).exec(tag);
    return m ? Number(m[1]) : null;
  };
  const r = (v: number): number => Math.round(v * 10) / 10;
  let out = tag;
  for (const [pos, size] of [['x', 'width'], ['y', 'height']] as const) {
    const p = attr(pos);
    const w = attr(size);
    if (p === null || w === null || !Number.isFinite(p) || !Number.isFinite(w)) continue;
    const lo = r(p);
    const hi = r(p + w);
    out = out.replace(new RegExp(` ${pos}="[^"]*"`), ` ${pos}="${lo}"`).replace(new RegExp(` ${size}="[^"]*"`), ` ${size}="${r(hi - lo)}"`);
  }
  return out;
}

function plotSvg(data: PlaneData, options: RenderOptions, width: number, height: number, y: number): string {
  const document = newDocument();
  const svg = Plot.plot({
    document, width, height,
    marginLeft: MARGIN.left, marginRight: MARGIN.right, marginTop: MARGIN.top, marginBottom: MARGIN.bottom,
    style: { fontFamily: FONT_FAMILY, fontSize: '11px', background: 'white' },
    x: axisOptions(data.x), y: axisOptions(data.y), color: colorOptions(data),
    marks: [
      Plot.frame({ stroke: '#444', strokeWidth: 0.8 }),
      ...dataMarks(data),
      ...overlayMarks(options.overlays, data.x, data.y),
    ],
  }) as unknown as SvgElement;
  return placed(svg, 0, y);
}

/** The colour bar: a small Plot of the colour scale with its own ticks. */
function colorBarSvg(data: PlaneData, width: number, x: number, y: number): { svg: string; caption: string } | null {
  const opts = colorOptions(data);
  if (!data.color && data.mode === 'scatter') return null;
  if (!data.color && data.mode === 'grid' && data.judged) return null;
  const type = opts.type as 'log' | 'linear';
  const [lo, hi] = opts.domain as [number, number];
  const steps = 64;
  const at = (t: number): number => (type === 'log' ? 10 ** (Math.log10(lo) + t * (Math.log10(hi) - Math.log10(lo))) : lo + t * (hi - lo));
  const rows = Array.from({ length: steps }, (_, i) => ({ x1: at(i / steps), x2: at((i + 1) / steps), v: at((i + 0.5) / steps) }));
  const document = newDocument();
  const axis: Record<string, unknown> = type === 'log'
    ? { type: 'log', domain: [lo, hi], ticks: logTicks([lo, hi], 5), tickFormat, label: null }
    : { type: 'linear', domain: [lo, hi], ticks: 4, tickFormat: formatLinear, label: null };
  const svg = Plot.plot({
    document, width, height: 34, marginLeft: 16, marginRight: 18, marginTop: 2, marginBottom: 20,
    style: { fontFamily: FONT_FAMILY, fontSize: '10px' },
    x: axis, y: { axis: null }, color: opts,
    marks: [Plot.rect(rows, { x1: 'x1', x2: 'x2', y1: 0, y2: 1, fill: 'v', ariaDescription: 'colour bar' })],
  }) as unknown as SvgElement;
  const placedSvg = placed(svg, x, y);
  const what = data.color
    ? data.mode === 'scatter' || (data.mode === 'grid' && data.pointsPerCell === 1) ? ''
      : `${type === 'log' ? 'geom. mean' : 'mean'} per ${data.mode === 'grid' ? 'cell' : 'bin'}${data.judged && !data.survivorsOnly ? ', of survivors if any' : ''}`
    : `points per ${data.mode === 'grid' ? 'cell' : 'bin'}`;
  return { svg: placedSvg, caption: what };
}

/** The key for survivors and excluded points, drawn with the same symbols as the marks. */
function statusKey(data: PlaneData, x0: number, y0: number): string {
  if (!data.judged) return `<text x="${x0}" y="${y0 + 4}" font-size="11" fill="#333">not judged: no verdicts for this scan</text>`;
  if (data.survivorsOnly) return `<text x="${x0}" y="${y0 + 4}" font-size="11" fill="#333">survivors only: excluded points are not drawn</text>`;
  const items: string[] = [];
  if (data.mode === 'scatter') {
    const c = data.color ? '#21918c' : STATUS_FILL.survives;
    const e = data.color ? '#21918c' : STATUS_FILL.excluded;
    items.push(`<circle cx="${x0 + 5}" cy="${y0}" r="4" fill="${c}"/><text x="${x0 + 14}" y="${y0 + 4}" font-size="11">survives</text>`);
    items.push(`<path transform="translate(${x0 + 95},${y0})" d="M-3.5,-3.5L3.5,3.5M-3.5,3.5L3.5,-3.5" stroke="${e}" stroke-opacity="${EXCLUDED_OPACITY + 0.2}" stroke-width="1.4"/><text x="${x0 + 104}" y="${y0 + 4}" font-size="11">excluded</text>`);
  } else {
    const c = data.color ? '#21918c' : data.mode === 'grid' ? STATUS_FILL.survives : '#7c7b78';
    const e = data.color ? '#21918c' : data.mode === 'grid' ? STATUS_FILL.excluded : '#7c7b78';
    items.push(`<rect x="${x0}" y="${y0 - 5}" width="10" height="10" fill="${c}"/><text x="${x0 + 14}" y="${y0 + 4}" font-size="11">holds survivors</text>`);
    items.push(`<rect x="${x0 + 125}" y="${y0 - 5}" width="10" height="10" fill="${e}" fill-opacity="${FADED_CELL_OPACITY}"/><text x="${x0 + 139}" y="${y0 + 4}" font-size="11">all excluded</text>`);
  }
  return items.join('');
}

/** Renders the plane to one SVG document string. */
export function renderPlane(data: PlaneData, options: RenderOptions): string {
  const width = options.width ?? DEFAULT_WIDTH;
  const height = options.height ?? DEFAULT_HEIGHT;
  const parts: string[] = [];
  parts.push(`<rect width="${width}" height="${height}" fill="white"/>`);
  const titleRoom = Math.floor((width - 24) / 8.6) - labelText(data.x.column).length - labelText(data.y.column).length - 6;
  const title = options.title.length > titleRoom ? `${options.title.slice(0, Math.max(0, titleRoom - 1))}…` : options.title;
  parts.push(`<text aria-label="title" x="12" y="18" font-size="14" font-weight="bold">${escapeXml(title)}: ${labelTspans(data.y.column, 14)}<tspan> vs </tspan>${labelTspans(data.x.column, 14)}</text>`);
  // notes share the header with the colour bar: cut to the room left of it (full text in <desc>)
  const room = Math.floor((width - 290) / 5.9);
  options.notes.filter(Boolean).slice(0, 2).forEach((n, i) => {
    const shown = n.length > room ? `${n.slice(0, room - 1)}…` : n;
    parts.push(`<text x="12" y="${38 + i * 14}" font-size="10.5" fill="#333">${escapeXml(shown)}</text>`);
  });
  parts.push(`<g aria-label="status key">${statusKey(data, 14, KEY_ROW_Y)}</g>`);
  let keyX = 250;
  let keyY = KEY_ROW_Y;
  for (const o of options.overlays) {
    if (o.lines.length === 0) continue;
    const keyWidth = 36 + o.label.length * 6.3;
    if (keyX + keyWidth > width - 12 && keyX > 14) {
      keyX = 14;
      keyY += KEY_ROW_PX;
    }
    parts.push(`<g aria-label="curve key"><line x1="${keyX}" y1="${keyY}" x2="${keyX + 22}" y2="${keyY}" stroke="black" stroke-width="1.6"${o.dash ? ` stroke-dasharray="${o.dash}"` : ''}/><text x="${keyX + 27}" y="${keyY + 4}" font-size="11">${escapeXml(o.label)}</text></g>`);
    keyX += keyWidth;
  }
  const header = HEADER_PX + (keyY - KEY_ROW_Y);
  const plotHeight = height - header;
  const bx = width - 262;
  const bar = colorBarSvg(data, 250, bx, 42);
  if (bar) {
    const label = data.color ? `<tspan>${labelTspans(data.color.column, 11)}</tspan>` : '';
    // start-anchored over the bar: resvg misplaces end-anchored text that holds sub/superscript tspans
    parts.push(`<text x="${bx}" y="38" font-size="11">${label}${bar.caption ? `<tspan font-size="9.5" fill="#444">  (${escapeXml(bar.caption)})</tspan>` : ''}</text>`);
    parts.push(bar.svg);
  }
  parts.push(plotSvg(data, options, width, plotHeight, header));
  const plotLeft = MARGIN.left;
  const plotRight = width - MARGIN.right;
  parts.push(`<text aria-label="x label" x="${(plotLeft + plotRight) / 2}" y="${height - 6}" font-size="13" text-anchor="middle">${labelTspans(data.x.column, 13)}</text>`);
  const yMid = header + (MARGIN.top + plotHeight - MARGIN.bottom) / 2;
  parts.push(`<text aria-label="y label" transform="translate(20,${yMid}) rotate(-90)" font-size="13" text-anchor="middle">${labelTspans(data.y.column, 13)}</text>`);
  const desc = `${labelText(data.y.column)} versus ${labelText(data.x.column)}`;
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}" font-family="${FONT_FAMILY}" role="img" aria-label="${escapeXml(desc)}">` +
    `<title>${escapeXml(`${options.title}: ${desc}`)}</title><desc>${escapeXml(options.notes.filter(Boolean).join('. '))}</desc>` +
    `${options.provenance ? `<metadata>${escapeXml(JSON.stringify(options.provenance))}</metadata>` : ''}${parts.join('')}</svg>`;
}
