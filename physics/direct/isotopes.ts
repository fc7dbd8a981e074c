/**
 * Target nuclei for direct detection: isotopic compositions, nuclear spins and compound formulas.
 *
 * What: for each supported element the stable isotopes with atom fraction and atomic mass, the
 * IUPAC standard atomic weight, and for spin-carrying isotopes the nuclear spin J with the proton
 * and neutron spin expectation values <S_p>, <S_n>; a parser for compound formulas ('CaWO4',
 * 'C3F8', 'NaI', 'CF3I') giving element mass fractions from the standard atomic weights; and
 * `targetIsotopes` that flattens a target into isotopes with their mass fractions.
 *
 * Method: isotope mass fraction inside an element w_i = x_i m_i / sum_j x_j m_j (x = atom fraction);
 * element mass fraction in a compound = n_el A_el / sum n A (standard atomic weights).
 *
 * Data and sources:
 *  - compositions and masses: NIST "Atomic Weights and Isotopic Compositions" (IUPAC representative
 *    isotopic compositions, masses from the Atomic Mass Evaluation), as quoted in the shared notes
 *    direct.md §5.2 (values quoted from memory there; the test checks that the abundance-weighted
 *    masses reproduce the standard atomic weights).
 *  - standard atomic weights: IUPAC CIAAW 2021 abridged/conventional values.
 *  - spins: direct.md §3.3 table (shell-model values, 10-30 % model dependence; sources per entry).
 *    Spin-carrying isotopes without an entry there (13C, 43Ca, 183W) are treated as spin-0 for
 *    the SD rate (an underestimate of below a few per cent of the SD rate of C3F8, CF3I, CaWO4,
 *    whose SD response is dominated by 19F, 127I, 17O).
 *
 * Validity: natural isotopic compositions only (enriched or depleted targets would need their own
 * table). Underground argon is ~pure 40Ar; natural argon here.
 */
import { BASE } from '../constants.js';
import { InvalidInputError } from '../issue.js';

export interface SpinData {
  /** nuclear spin J */
  readonly j: number;
  /** proton spin expectation value <S_p> */
  readonly sp: number;
  /** neutron spin expectation value <S_n> */
  readonly sn: number;
  readonly source: string;
}

export interface Isotope {
  /** mass number */
  readonly a: number;
  /** atomic mass, u */
  readonly massU: number;
  /** atom fraction (0..1) */
  readonly atomFraction: number;
  readonly spin?: SpinData;
}

export interface Element {
  readonly symbol: string;
  readonly z: number;
  /** IUPAC standard atomic weight, u */
  readonly standardWeightU: number;
  readonly isotopes: readonly Isotope[];
}

const iso = (a: number, atomPercent: number, massU: number, spin?: SpinData): Isotope =>
  Object.freeze(spin ? { a, massU, atomFraction: atomPercent / 100, spin } : { a, massU, atomFraction: atomPercent / 100 });
const spin = (j: number, sp: number, sn: number, source: string): SpinData => Object.freeze({ j, sp, sn, source });
const el = (symbol: string, z: number, standardWeightU: number, isotopes: Isotope[]): Element =>
  Object.freeze({ symbol, z, standardWeightU, isotopes: Object.freeze(isotopes) });

const KLOS = 'Klos, Menendez, Gazit & Schwenk, PRD 88, 083516 (2013), via direct.md §3.3 [from memory there]';

/** Element table, direct.md §5.2 (NIST/IUPAC compositions) and §3.3 (spins). */
export const ELEMENTS: Readonly<Record<string, Element>> = Object.freeze({
  Xe: el('Xe', 54, 131.293, [
    iso(124, 0.0952, 123.905893), iso(126, 0.089, 125.904274), iso(128, 1.9102, 127.9035313),
    iso(129, 26.4006, 128.9047794, spin(0.5, 0.01, 0.329, KLOS)), iso(130, 4.071, 129.903508),
    iso(131, 21.2324, 130.9050824, spin(1.5, -0.009, -0.272, KLOS)), iso(132, 26.9086, 131.9041535),
    iso(134, 10.4357, 133.9053945), iso(136, 8.8573, 135.907219),
  ]),
  Ar: el('Ar', 18, 39.948, [iso(36, 0.3365, 35.967545106), iso(38, 0.0632, 37.96273211), iso(40, 99.6003, 39.9623831237)]),
  Ge: el('Ge', 32, 72.63, [
    iso(70, 20.57, 69.92424875), iso(72, 27.45, 71.922075826),
    iso(73, 7.75, 72.923458956, spin(4.5, 0.03, 0.378, 'Dimitrov, Engel & Pittel, PRD 51, 291 (1995), via direct.md §3.3 [from memory there]')),
    iso(74, 36.5, 73.921177761), iso(76, 7.73, 75.921402726),
  ]),
  Si: el('Si', 14, 28.085, [
    iso(28, 92.223, 27.97692653465),
    iso(29, 4.685, 28.9764946649, spin(0.5, -0.002, 0.13, 'Ressell et al., PRD 48, 5519 (1993), via direct.md §3.3 [from memory there]')),
    iso(30, 3.092, 29.973770136),
  ]),
  O: el('O', 8, 15.999, [
    iso(16, 99.757, 15.99491461957),
    iso(17, 0.038, 16.9991317565, spin(2.5, 0, 0.5, 'single-particle d5/2 neutron estimate, direct.md §3.3')),
    iso(18, 0.205, 17.99915961286),
  ]),
  Ca: el('Ca', 20, 40.078, [
    iso(40, 96.941, 39.962590863), iso(42, 0.647, 41.95861783), iso(43, 0.135, 42.95876644),
    iso(44, 2.086, 43.95548156), iso(46, 0.004, 45.953689), iso(48, 0.187, 47.95252276),
  ]),
  W: el('W', 74, 183.84, [
    iso(180, 0.12, 179.9467108), iso(182, 26.5, 181.94820394), iso(183, 14.31, 182.95022275),
    iso(184, 30.64, 183.95093092), iso(186, 28.43, 185.9543628),
  ]),
  F: el('F', 9, 18.998403163, [
    iso(19, 100, 18.99840316273, spin(0.5, 0.4751, -0.0087, 'Divari, Kosmas, Vergados & Skouras, PRC 61, 054612 (2000), via direct.md §3.3 [from memory there]')),
  ]),
  C: el('C', 6, 12.011, [iso(12, 98.93, 12), iso(13, 1.07, 13.00335483507)]),
  I: el('I', 53, 126.90447, [
    iso(127, 100, 126.9044719, spin(2.5, 0.309, 0.075, 'Ressell & Dean, PRC 56, 535 (1997), via direct.md §3.3 [from memory there]')),
  ]),
  Na: el('Na', 11, 22.98976928, [
    iso(23, 100, 22.989769282, spin(1.5, 0.2477, 0.0198, 'Ressell & Dean, PRC 56, 535 (1997), via direct.md §3.3 [from memory there]')),
  ]),
});

export const ELEMENT_SYMBOLS: readonly string[] = Object.freeze(Object.keys(ELEMENTS));

function invalidTarget(path: string, message: string, seen: string): never {
  throw new InvalidInputError([{
    code: 'invalid_target', path, message, seen,
    allowed: `an element (${ELEMENT_SYMBOLS.join(', ')}) or a formula of them such as CaWO4, C3F8, NaI, CF3I`,
  }]);
}

/**
 * Parses a compound formula (element symbols each followed by an optional count, e.g. 'CaWO4',
 * 'C3F8'; no brackets or hydrates) into element mass fractions, ordered as written.
 * @param path spec field named in errors, e.g. 'detectors[0].target'
 */
export function parseFormula(formula: string, path = 'target'): { element: Element; massFraction: number }[] {
  const text = formula.trim();
  if (!/^([A-Z][a-z]?\d*)+$/.test(text)) {
    invalidTarget(path, `target '${formula}' is not a formula of element symbols with optional counts`, formula);
  }
  const counts = new Map<string, number>();
  for (const m of text.matchAll(/([A-Z][a-z]?)(\d*)/g)) {
    const symbol = m[1]!;
    const count = m[2] === '' ? 1 : Number(m[2]);
    if (!(symbol in ELEMENTS)) invalidTarget(path, `unknown element '${symbol}' in target '${formula}'`, formula);
    if (count < 1) invalidTarget(path, `element count must be at least 1 in target '${formula}'`, formula);
    counts.set(symbol, (counts.get(symbol) ?? 0) + count);
  }
  let total = 0;
  for (const [symbol, n] of counts) total += n * ELEMENTS[symbol]!.standardWeightU;
  return [...counts].map(([symbol, n]) => ({
    element: ELEMENTS[symbol]!,
    massFraction: (n * ELEMENTS[symbol]!.standardWeightU) / total,
  }));
}

/** One isotope of a target with everything the rate needs. */
export interface TargetIsotope {
  readonly symbol: string;
  readonly z: number;
  readonly a: number;
  /** nuclear mass m_A = atomic mass x u (electron mass and binding neglected, < 0.03 %, direct.md §1), GeV */
  readonly massGeV: number;
  /** mass fraction of this isotope in the whole target */
  readonly massFraction: number;
  readonly spin?: SpinData;
}

/** Flattens a target (element or formula) into its isotopes with mass fractions summing to 1. */
export function targetIsotopes(target: string, path = 'target'): TargetIsotope[] {
  const out: TargetIsotope[] = [];
  for (const { element, massFraction } of parseFormula(target, path)) {
    const mean = element.isotopes.reduce((s, i) => s + i.atomFraction * i.massU, 0);
    for (const i of element.isotopes) {
      out.push(Object.freeze({
        symbol: element.symbol,
        z: element.z,
        a: i.a,
        massGeV: i.massU * BASE.atomicMassUnit.value,
        massFraction: (massFraction * i.atomFraction * i.massU) / mean,
        ...(i.spin ? { spin: i.spin } : {}),
      }));
    }
  }
  return out;
}

/** Abundance-weighted mean atomic mass of an element, u. */
export function meanAtomicMassU(element: Element): number {
  const norm = element.isotopes.reduce((s, i) => s + i.atomFraction, 0);
  return element.isotopes.reduce((s, i) => s + i.atomFraction * i.massU, 0) / norm;
}
