#!/usr/bin/env -S node --import tsx
import { answerQuickly } from "./quickAnswers.ts";

// The program (commander, the built-in profiles) is loaded only for a real command. No top-level await:
// the prebuilt bundle is CommonJS (cli/bin/bundle.mjs), so that V8 can cache its compiled code.
if (!answerQuickly(process.argv)) {
  void import("./main.ts").then(({ main, reportAndExit }) => main(process.argv).catch(reportAndExit));
}
