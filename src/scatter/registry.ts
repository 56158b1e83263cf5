/**
 * The providers shellrank ships, registered by name. Callers build a registry with
 * {@link defaultProviders} and pass it along (no global state).
 */
import { ProviderRegistry } from './provider';
import { parametricProvider } from './parametric';

/** Name of the provider used when none is asked for. */
export const DEFAULT_PROVIDER = 'parametric';

export function defaultProviders(): ProviderRegistry {
  return new ProviderRegistry().register(parametricProvider);
}
