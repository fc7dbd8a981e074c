/**
 * Standard Halo Model velocity integral for direct detection.
 *
 * What: the mean inverse speed eta(v_min) = integral over v > v_min of f_lab(v)/v d^3v for a
 * Maxwellian galactic distribution truncated at the escape speed and boosted by the Earth speed.
 *
 * Method: closed form (Savage, Freese & Gondolo 2006, PRD 74, 043531; McCabe 2010, PRD 82, 023530;
 * direct.md §4.2). With x = v_min/v0, y = v_E/v0, z = v_esc/v0 and N_esc = erf(z) - (2/sqrt(pi)) z
 * e^{-z^2}:
 *   x < z - y:          eta = [erf(x+y) - erf(x-y) - (4/sqrt(pi)) y e^{-z^2}] / (2 N_esc v0 y)
 *   z - y <= x < z + y: eta = [erf(z) - erf(x-y) - (2/sqrt(pi)) (z+y-x) e^{-z^2}] / (2 N_esc v0 y)
 *   x >= z + y:         eta = 0.
 * erf from @stdlib/math-base-special-erf (the FreeBSD msun algorithm, < 1 ulp in double precision).
 *
 * Validity: isotropic SHM in the galactic frame with a sharp cut at v_esc; v_E < v_esc. The kink of
 * eta at v_min = v_esc - v_E is where rate integrals should be split.
 * Accuracy: double precision in absolute terms; relative accuracy degrades only where eta is
 * tiny (the last ~1 km/s before v_esc + v_E). Checked against a direct 3-D integral (scipy fixture).
 * References: Lewin & Smith 1996, Astropart. Phys. 6, 87; Baxter et al. 2021, EPJC 81, 907.
 */
import erf from '@stdlib/math-base-special-erf';
import type { LocalHalo } from '../setup.js';
import { InvalidInputError } from '../issue.js';

const TWO_OVER_SQRT_PI = 2 / Math.sqrt(Math.PI);

/** Precomputed constants of the SHM for repeated eta evaluations. */
export interface ShmEta {
  readonly v0KmS: number;
  readonly vEscKmS: number;
  readonly vEarthKmS: number;
  /** kink of eta: v_esc - v_E, km/s */
  readonly vKinkKmS: number;
  /** eta vanishes at and above v_esc + v_E, km/s */
  readonly vMaxKmS: number;
  /** eta(v_min) in s/km */
  eta(vMinKmS: number): number;
}

/** Escape-truncation normalisation N_esc(z) = erf(z) - (2/sqrt(pi)) z exp(-z^2). */
export function escapeNormalisation(z: number): number {
  return erf(z) - TWO_OVER_SQRT_PI * z * Math.exp(-z * z);
}

/**
 * Builds eta(v_min) for a local halo; throws InvalidInputError naming the halo field when the
 * speeds are not positive or v_E >= v_esc.
 */
export function shmEta(halo: LocalHalo, path = 'halo.local'): ShmEta {
  const { v0KmS, vEscKmS, vEarthKmS } = halo;
  const bad = (field: string, seen: number, allowed: string): never => {
    throw new InvalidInputError([{ code: 'out_of_range', path: `${path}.${field}`, message: `${field} must satisfy ${allowed}`, seen: String(seen), allowed }]);
  };
  if (!(Number.isFinite(v0KmS) && v0KmS > 0)) bad('v0KmS', v0KmS, '0 < v0KmS (km/s)');
  if (!(Number.isFinite(vEscKmS) && vEscKmS > 0)) bad('vEscKmS', vEscKmS, '0 < vEscKmS (km/s)');
  if (!(Number.isFinite(vEarthKmS) && vEarthKmS > 0 && vEarthKmS < vEscKmS)) bad('vEarthKmS', vEarthKmS, '0 < vEarthKmS < vEscKmS (km/s)');
  const y = vEarthKmS / v0KmS;
  const z = vEscKmS / v0KmS;
  const expZ2 = Math.exp(-z * z);
  const erfZ = erf(z);
  const norm = 1 / (2 * escapeNormalisation(z) * v0KmS * y);
  const lowConst = 2 * TWO_OVER_SQRT_PI * y * expZ2;
  const eta = (vMinKmS: number): number => {
    const x = vMinKmS / v0KmS;
    if (x < z - y) return norm * (erf(x + y) - erf(x - y) - lowConst);
    if (x < z + y) return Math.max(norm * (erfZ - erf(x - y) - TWO_OVER_SQRT_PI * (z + y - x) * expZ2), 0);
    return 0;
  };
  return Object.freeze({ v0KmS, vEscKmS, vEarthKmS, vKinkKmS: vEscKmS - vEarthKmS, vMaxKmS: vEscKmS + vEarthKmS, eta });
}
