export * from "./plane-index.js";
export * from "./sky-index.js";
export * from "./zones.js";
export * from "./partitions.js";
export * from "./pairs.js";
export * from "./brute.js";
