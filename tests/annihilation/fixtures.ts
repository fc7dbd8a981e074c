/**
 * Loader and comparison helpers for the annihilation / width fixtures written by
 * tests/fixtures/annihilation/generate_annihilation_fixtures.py (explicit-spinor numerics, mpmath).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { expect } from 'vitest';
import type { Fermion } from '../../physics/constants.js';
import type { MediatorKind, ModelPoint } from '../../physics/model.js';

export interface FfbarCase {
  mediator: MediatorKind; mChiGeV: number; mMedGeV: number; widthGeV: number;
  mFGeV: number; colours: number; sGeV2: number; sigmaVGeV2: number;
}
export interface PairCase { mediator: MediatorKind; mChiGeV: number; mMedGeV: number; v: number; sGeV2: number; sigmaVGeV2: number }
export interface PairNrCase { mediator: MediatorKind; mChiGeV: number; mMedGeV: number; r: number; aGeV2: number; bGeV2: number }
export interface PairMajoranaCase {
  mediator: MediatorKind; mChiGeV: number; mMedGeV: number; v: number; sGeV2: number;
  msqRatioMajoranaOverDirac: number[]; sigmaVMajoranaGeV2: number; sigmaVDiracGeV2: number;
}
export interface LoopCase { kind: 'scalar' | 'pseudoscalar'; tau: number; re: number; im: number }
export interface WidthCase {
  point: Omit<ModelPoint, 'width_med'>;
  partialsGeV: Record<string, number>;
  totalGeV: number;
}
export interface AnnihilationFixtures {
  vevGeV: number; alphaS: number; fermions: Fermion[];
  ffbar: FfbarCase[]; pair: PairCase[]; pairNr: PairNrCase[]; pairMajorana: PairMajoranaCase[]; loops: LoopCase[]; widths: WidthCase[];
}

const path = fileURLToPath(new URL('../fixtures/annihilation/annihilation_fixtures.json', import.meta.url));
export const FIXTURES: AnnihilationFixtures = JSON.parse(readFileSync(path, 'utf8')) as AnnihilationFixtures;

/** Relative comparison whose failure message shows input, got, expected, difference and tolerance. */
export function expectRel(got: number, expected: number, tol: number, input: string): void {
  const diff = expected === 0 ? Math.abs(got) : Math.abs(got - expected) / Math.abs(expected);
  expect(
    diff <= tol,
    `${input}: got ${got}, expected ${expected}, relative difference ${diff.toExponential(3)} > tolerance ${tol}`,
  ).toBe(true);
}

/** A single fermion, for test vectors that keep one final state only. */
export function single(name: string, massGeV: number, colours: number, kind: 'quark' | 'lepton'): Fermion[] {
  return [{ name, massGeV, colours, kind, source: 'test vector of indirect.md A3' }];
}
