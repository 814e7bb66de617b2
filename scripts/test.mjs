#!/usr/bin/env node
// `npm test`: install what is missing, then run the whole suite against a throwaway PostgreSQL.
// Plain JS on purpose: it must run before `npm ci` has installed tsx.
import { ensureDependencies, runTs } from "./lib/bootstrap.mjs";

ensureDependencies();
runTs("scripts/run-tests.ts", process.argv.slice(2));
