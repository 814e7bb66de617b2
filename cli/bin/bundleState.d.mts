/** Sources that changed since the bundle was built (empty when current); null when there is no usable bundle. */
export function staleBundleSources(): string[] | null;
