/**
 * Physics notation for ledger columns: each parameter or observable name maps to a symbol with
 * subscripts and a unit (m_chi -> m_χ [GeV], sigv0_cm3s -> ⟨σv⟩₀ [cm³/s]). Labels are kept as text
 * segments so that SVG can draw real subscripts (tspans) while tests and the HTML page can read the
 * same label as plain text. Also formats log-axis ticks as powers of ten with superscripts.
 */

/** One run of label text; `sub` runs are drawn lowered and smaller. */
export interface LabelSegment {
  readonly text: string;
  readonly sub?: boolean;
}

export interface QuantityLabel {
  readonly segments: readonly LabelSegment[];
  /** unit text, '' for dimensionless quantities */
  readonly unit: string;
}

const s = (text: string): LabelSegment => ({ text });
const sub = (text: string): LabelSegment => ({ text, sub: true });

const KNOWN: Readonly<Record<string, QuantityLabel>> = {
  m_chi: { segments: [s('m'), sub('χ')], unit: 'GeV' },
  m_med: { segments: [s('m'), sub('med')], unit: 'GeV' },
  g_chi: { segments: [s('g'), sub('χ')], unit: '' },
  g_q: { segments: [s('g'), sub('q')], unit: '' },
  g_l: { segments: [s('g'), sub('ℓ')], unit: '' },
  width_med: { segments: [s('Γ'), sub('med')], unit: 'GeV' },
  omega_h2: { segments: [s('Ω'), sub('χ'), s('h²')], unit: '' },
  x_f: { segments: [s('x'), sub('f'), s(' = m'), sub('χ'), s('/T'), sub('f')], unit: '' },
  sigv_fo_cm3s: { segments: [s('⟨σv⟩'), sub('fo')], unit: 'cm³/s' },
  sigv0_cm3s: { segments: [s('⟨σv⟩'), sub('0')], unit: 'cm³/s' },
  sigma_si_p_cm2: { segments: [s('σ'), sub('SI,p')], unit: 'cm²' },
  sigma_si_n_cm2: { segments: [s('σ'), sub('SI,n')], unit: 'cm²' },
  sigma_sd_p_cm2: { segments: [s('σ'), sub('SD,p')], unit: 'cm²' },
  sigma_sd_n_cm2: { segments: [s('σ'), sub('SD,n')], unit: 'cm²' },
  width_med_gev: { segments: [s('Γ'), sub('med')], unit: 'GeV' },
};

/** The label of a ledger column; spec-defined detectors and targets get a generic symbol. */
function quantityLabel(column: string): QuantityLabel {
  const known = KNOWN[column];
  if (known) return known;
  const events = /^events_(.+)$/.exec(column);
  if (events) return { segments: [s('N'), sub(events[1] ?? '')], unit: 'events' };
  const flux = /^flux_(.+)_cm2s$/.exec(column);
  if (flux) return { segments: [s('Φ'), sub(flux[1] ?? '')], unit: 'cm⁻² s⁻¹' };
  return { segments: [s(column)], unit: '' };
}

/** The label as plain text (what a screen reader or a test sees): subscripts are simply inline. */
export function labelText(column: string): string {
  const l = quantityLabel(column);
  const symbol = l.segments.map((seg) => seg.text).join('');
  return l.unit ? `${symbol} [${l.unit}]` : symbol;
}

const escapeXml = (t: string): string =>
  t.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

/**
 * The label as SVG <tspan>s, to put inside a <text>. Subscripts use dy shifts rather than
 * baseline-shift because both resvg and browsers honour dy the same way.
 */
export function labelTspans(column: string, fontSizePx: number): string {
  const l = quantityLabel(column);
  const drop = Math.round(fontSizePx * 0.3 * 10) / 10;
  const subSize = Math.round(fontSizePx * 0.75 * 10) / 10;
  let lowered = false;
  const parts: string[] = [];
  for (const seg of l.segments) {
    if (seg.sub && !lowered) {
      parts.push(`<tspan dy="${drop}" font-size="${subSize}">${escapeXml(seg.text)}</tspan>`);
      lowered = true;
    } else if (seg.sub) {
      parts.push(`<tspan font-size="${subSize}">${escapeXml(seg.text)}</tspan>`);
    } else if (lowered) {
      parts.push(`<tspan dy="${-drop}">${escapeXml(seg.text)}</tspan>`);
      lowered = false;
    } else {
      parts.push(`<tspan>${escapeXml(seg.text)}</tspan>`);
    }
  }
  if (l.unit) parts.push(`<tspan${lowered ? ` dy="${-drop}"` : ''}> [${escapeXml(l.unit)}]</tspan>`);
  return parts.join('');
}

const SUPERSCRIPT: Readonly<Record<string, string>> = {
  '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹',
};

/** 1e-40 -> "10⁻⁴⁰"; 1 -> "1"; 10 -> "10". For tick labels at exact powers of ten. */
export function formatPowerOfTen(value: number): string {
  const e = Math.round(Math.log10(value));
  if (e === 0) return '1';
  if (e === 1) return '10';
  return `10${String(e).split('').map((ch) => SUPERSCRIPT[ch] ?? ch).join('')}`;
}

/** Tick text on a linear axis: short, without float noise. */
export function formatLinear(value: number): string {
  if (value === 0) return '0';
  const a = Math.abs(value);
  if (a >= 1e5 || a < 1e-3) {
    const [mant, exp] = value.toExponential(1).split('e');
    return `${mant}×10${String(Number(exp)).split('').map((ch) => SUPERSCRIPT[ch] ?? ch).join('')}`;
  }
  return String(Number(value.toPrecision(4)));
}

export { escapeXml };
