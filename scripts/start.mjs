#!/usr/bin/env node
// `npm start`: install what is missing, then bring up PostgreSQL, the mail fake, the server and the portal.
// Plain JS on purpose: it must run before `npm ci` has installed tsx.
import { ensureDependencies, runTs } from "./lib/bootstrap.mjs";

ensureDependencies();
runTs("scripts/stack.ts", process.argv.slice(2));
