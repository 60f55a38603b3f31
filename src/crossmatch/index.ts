export * from "./plane-index.js";
export * from "./sky-index.js";
