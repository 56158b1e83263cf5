/** The InputError a call throws; fails the test when it throws nothing or something else. */
import { InputError } from '../../src/core/errors';

export function errorOf(run: () => unknown): InputError {
  try {
    run();
  } catch (e) {
    if (e instanceof InputError) return e;
    throw e;
  }
  throw new Error('expected an InputError');
}
