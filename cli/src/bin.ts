#!/usr/bin/env -S node --import tsx
import { answerQuickly } from "./quickAnswers.ts";

// The program (commander, zod, the built-in profiles) is loaded only for a real command.
if (!answerQuickly(process.argv)) {
  const { main, reportAndExit } = await import("./main.ts");
  main(process.argv).catch(reportAndExit);
}
