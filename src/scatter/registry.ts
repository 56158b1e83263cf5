/**
 * The providers shellrank ships, registered by name. Callers build a registry with
 * {@link defaultProviders} and pass it along (no global state).
 */
import { ProviderRegistry } from './provider';
import { parametricProvider } from './parametric';
import { FIRST_PRINCIPLES_PROVIDER_NAME, firstPrinciplesProvider } from './provider-first-principles';

/** Name of the provider used when none is asked for. */
export const DEFAULT_PROVIDER = FIRST_PRINCIPLES_PROVIDER_NAME;

export interface ProviderOptions {
  /** Use the on-disk cache of first-principles tables (default true). */
  cache?: boolean;
  /** Cache folder (default: $SHELLRANK_CACHE_DIR, $XDG_CACHE_HOME/shellrank or ~/.cache/shellrank). */
  cacheDir?: string;
}

export function defaultProviders(options: ProviderOptions = {}): ProviderRegistry {
  return new ProviderRegistry()
    .register(firstPrinciplesProvider({ cache: options.cache, cacheDir: options.cacheDir }))
    .register(parametricProvider);
}
