/**
 * The stand-in physics of fake-physics.ts with other numerical knobs (a ledger made with one must not
 * be resumed with the other), and a prepare() that refuses a detector named `xe_refused`, as real
 * physics refuses a setup it cannot handle. Not physics.
 */
import { InvalidInputError } from '../../physics/issue.js';
import type { ScanPhysicsSetup } from '../../physics/setup.js';
import { evaluate, prepare as fakePrepare } from './fake-physics.js';

export { evaluate };

export function prepare(setup: ScanPhysicsSetup): { observableNames: readonly string[]; knobs: { fake: number } } {
  const refused = setup.detectors.findIndex((d) => d.name === 'xe_refused');
  if (refused >= 0)
    throw new InvalidInputError([{ code: 'unsupported', path: `detectors[${refused}]`, message: 'this stand-in physics refuses the detector xe_refused', allowed: 'any other detector' }]);
  return { ...fakePrepare(setup), knobs: { fake: 2 } };
}
