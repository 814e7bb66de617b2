/** Parsers for the worker's time options (commander's InvalidArgumentError says what was expected). */
import { InvalidArgumentError } from "commander";

export function secondsParser(min: number, max: number): (value: string) => number {
  return (value) => {
    const n = Number(value);
    if (value.trim() === "" || !Number.isFinite(n) || n < min || n > max) {
      throw new InvalidArgumentError(`expected a number of seconds from ${min} to ${max}, got "${value}".`);
    }
    return n;
  };
}
