#!/usr/bin/env node
// The CLI is TypeScript run through tsx: register its loader, then hand over to src/bin.ts.
import { register } from "tsx/esm/api";

register();
await import("../src/bin.ts");
