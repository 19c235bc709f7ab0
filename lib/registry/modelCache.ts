import type { SurrogateModel } from "../surrogate/model.ts";

/**
 * Decoded models kept in memory, least recently used first out, bounded by the bytes of their coefficients. A model
 * enters through `load` (which verifies its checksums) once; concurrent first requests share that one load.
 */
export class ModelCache {
  private readonly entries = new Map<string, { model: SurrogateModel; bytes: number }>();
  private readonly loading = new Map<string, Promise<SurrogateModel>>();
  private used = 0;

  constructor(readonly maxBytes: number) {}

  get bytesUsed(): number {
    return this.used;
  }

  get size(): number {
    return this.entries.size;
  }

  async get(key: string, load: () => Promise<SurrogateModel>): Promise<SurrogateModel> {
    const hit = this.entries.get(key);
    if (hit) {
      // Map keeps insertion order: re-insert to mark as most recently used.
      this.entries.delete(key);
      this.entries.set(key, hit);
      return hit.model;
    }
    let pending = this.loading.get(key);
    if (!pending) {
      pending = load()
        .then((model) => {
          this.insert(key, model);
          return model;
        })
        .finally(() => this.loading.delete(key));
      this.loading.set(key, pending);
    }
    return pending;
  }

  private insert(key: string, model: SurrogateModel): void {
    const bytes = model.coefficients.byteLength;
    if (bytes > this.maxBytes) return; // too big to keep: used once
    this.entries.set(key, { model, bytes });
    this.used += bytes;
    for (const [oldest, entry] of this.entries) {
      if (this.used <= this.maxBytes) break;
      this.entries.delete(oldest);
      this.used -= entry.bytes;
    }
  }
}
