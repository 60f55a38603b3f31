export * from "./mock.js";
export * from "./hubble.js";
export * from "./recentre.js";
export * from "./bulkflow.js";
export * from "./outliers.js";
export * from "./fof.js";
export * from "./groups.js";
export * from "./infall.js";
