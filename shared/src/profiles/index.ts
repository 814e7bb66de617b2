export * from "./profileSchema.ts";
export * from "./parseProfile.ts";
export * from "./builtinProfiles.ts";
export * from "./profileSettings.ts";
export * from "./canonicalProfileJson.ts";
export * from "./formatDemands.ts";
export * from "./judge.ts";
