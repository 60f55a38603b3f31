export * from "./sidecars.js";
export * from "./view-server.js";
