export * from "./columns.js";
export * from "./meta.js";
export * from "./io.js";
