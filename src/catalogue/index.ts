export * from "./columns.js";
export * from "./meta.js";
export * from "./io.js";
export * from "./roles.js"; export * from "./validity.js"; export * from "./load.js";
