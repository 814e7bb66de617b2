#!/usr/bin/env -S node --import tsx
import { main, reportAndExit } from "./main.ts";

main(process.argv).catch(reportAndExit);
