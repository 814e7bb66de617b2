/** server/src/config.ts: the environment read once, with clear errors for bad values. */
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { ConfigError, loadConfig, parseTrustProxy } from "../../server/src/config.ts";

const dataDir = mkdtempSync(path.join(process.env.TIDEMARK_TEST_TMP ?? tmpdir(), "config-"));
afterAll(() => rmSync(dataDir, { recursive: true, force: true }));
const base = { DATABASE_URL: "postgres://u@127.0.0.1:5432/tidemark", DATA_DIR: dataDir };

describe("loadConfig", () => {
  it("has the documented defaults", () => {
    const c = loadConfig({ ...base });
    expect(c).toMatchObject({ port: 8080, host: "127.0.0.1", publicUrl: "http://127.0.0.1:8080", trustProxy: false, demoPassword: "harbourside-demo", smtpUrl: null });
    expect(c.objectStore).toEqual({ kind: "fs", dir: path.join(dataDir, "objects") });
    expect(c.webDistDir.endsWith(path.join("web", "dist"))).toBe(true);
  });

  it("generates a session secret once and keeps it under the data folder", () => {
    const first = loadConfig({ ...base }).sessionSecret;
    expect(first.length).toBeGreaterThanOrEqual(40);
    expect(loadConfig({ ...base }).sessionSecret).toBe(first);
    expect(readFileSync(path.join(dataDir, "session-secret"), "utf8").trim()).toBe(first);
    expect(loadConfig({ ...base, SESSION_SECRET: "x".repeat(40) }).sessionSecret).toBe("x".repeat(40));
  });

  it("refuses what it cannot use, naming the variable", () => {
    expect(() => loadConfig({ DATA_DIR: dataDir })).toThrow(/DATABASE_URL/);
    expect(() => loadConfig({ ...base, PORT: "eighty" })).toThrow(/PORT/);
    expect(() => loadConfig({ ...base, SESSION_SECRET: "short" })).toThrow(/SESSION_SECRET/);
    expect(() => loadConfig({ ...base, OBJECT_STORE: "s3" })).toThrow(/S3_BUCKET/);
    expect(() => loadConfig({ ...base, OBJECT_STORE: "ftp" })).toThrow(ConfigError);
    expect(() => loadConfig({ ...base, PUBLIC_URL: "portal" })).toThrow(/PUBLIC_URL/);
  });

  it("reads the S3 settings, trailing-slash-free PUBLIC_URL, and DEMO_SEED", () => {
    const c = loadConfig({ ...base, OBJECT_STORE: "s3", S3_BUCKET: "qc", S3_ENDPOINT: "http://127.0.0.1:9000", PUBLIC_URL: "https://qc.harbourside.test/", DEMO_SEED: "0" });
    expect(c.objectStore).toMatchObject({ kind: "s3", bucket: "qc", endpoint: "http://127.0.0.1:9000", forcePathStyle: true, region: "us-east-1" });
    expect(c.publicUrl).toBe("https://qc.harbourside.test");
    expect(c.demoSeed).toBe(false);
    expect(loadConfig({ ...base, NODE_ENV: "production" }).demoSeed).toBe(false);
  });

  it("reads upload limits in bytes or binary units, leaving the rest to the defaults", () => {
    expect(loadConfig({ ...base }).upload).toEqual({});
    const c = loadConfig({ ...base, UPLOAD_MAX_IMAGE: "8M", UPLOAD_MAX_TOTAL: "1G", UPLOAD_MAX_REPORT: "500000", UPLOAD_MAX_PARTS: "100" });
    expect(c.upload).toEqual({ maxImageBytes: 8 * 1024 ** 2, maxTotalBytes: 1024 ** 3, maxReportBytes: 500_000, maxImages: 100 });
    expect(() => loadConfig({ ...base, UPLOAD_MAX_EXCERPT: "lots" })).toThrow(/UPLOAD_MAX_EXCERPT must be a size/);
    expect(() => loadConfig({ ...base, UPLOAD_MAX_PARTS: "0" })).toThrow(/UPLOAD_MAX_PARTS/);
  });

  it("parses TRUST_PROXY as Express expects it", () => {
    expect(parseTrustProxy(undefined)).toBe(false);
    expect(parseTrustProxy("true")).toBe(true);
    expect(parseTrustProxy("1")).toBe(1);
    expect(parseTrustProxy("loopback, 10.0.0.0/8")).toBe("loopback, 10.0.0.0/8");
  });
});
