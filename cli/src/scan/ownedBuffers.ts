/**
 * The ArrayBuffers a message may transfer rather than copy: those of the typed arrays in `value` that
 * span their whole buffer. A view into a larger buffer (a slice of Node's Buffer pool, say) is left to
 * be copied, since moving its buffer would take the rest of it too.
 */
export function ownedBuffers(value: unknown): ArrayBuffer[] {
  const found = new Set<ArrayBuffer>();
  const seen = new Set<object>();
  const visit = (v: unknown): void => {
    if (v === null || typeof v !== "object" || seen.has(v)) return;
    seen.add(v);
    if (ArrayBuffer.isView(v)) {
      const b = v.buffer;
      if (b instanceof ArrayBuffer && v.byteOffset === 0 && v.byteLength === b.byteLength) found.add(b);
      return;
    }
    for (const item of Array.isArray(v) ? v : Object.values(v)) visit(item);
  };
  visit(value);
  return [...found];
}
