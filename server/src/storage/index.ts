import type { ObjectStoreConfig } from "../config.ts";
import { createFsStore } from "./fsStore.ts";
import type { ObjectStore } from "./ObjectStore.ts";
import { createS3Store } from "./s3Store.ts";

export function createObjectStore(config: ObjectStoreConfig): ObjectStore {
  return config.kind === "fs" ? createFsStore(config.dir) : createS3Store(config);
}
