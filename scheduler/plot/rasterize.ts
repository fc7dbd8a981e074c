/**
 * SVG to PNG with resvg. resvg draws text only with fonts it is given: DejaVu Sans from Debian's
 * fonts-dejavu-core is loaded by file when present (fast and the same on every machine), else the
 * system fonts are scanned.
 */
import fs from 'node:fs';
import { Resvg } from '@resvg/resvg-js';
import { FONT_FAMILY } from './render-plane.js';

/** Knob: PNG pixels per SVG unit (2 gives sharp text on high-density screens and in slides). */
export const PNG_SCALE = 2;

const DEJAVU_FILES = [
  '/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf',
  '/usr/share/fonts/truetype/dejavu/DejaVuSans-Bold.ttf',
];

export function svgToPng(svg: string, scale = PNG_SCALE): Buffer {
  const fontFiles = DEJAVU_FILES.filter((f) => fs.existsSync(f));
  const resvg = new Resvg(svg, {
    fitTo: { mode: 'zoom', value: scale },
    font: {
      fontFiles,
      loadSystemFonts: fontFiles.length === 0,
      defaultFontFamily: FONT_FAMILY,
      sansSerifFamily: FONT_FAMILY,
    },
  });
  return resvg.render().asPng();
}
