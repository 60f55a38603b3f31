export * from "./columns.js";
export * from "./meta.js";
