import { afterEach, vi } from "vitest";
import { cleanup } from "@testing-library/react";

// Testing Library does not auto-clean without globals; unmount after every test.
afterEach(() => cleanup());

// uPlot needs a canvas and matchMedia, which jsdom lacks; charts are checked through what they are given.
vi.mock("uplot", () => import("./uplotMock.ts"));
