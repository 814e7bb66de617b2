import { afterEach } from "vitest";
import { cleanup } from "@testing-library/react";

// Testing Library does not auto-clean without globals; unmount after every test.
afterEach(() => cleanup());
