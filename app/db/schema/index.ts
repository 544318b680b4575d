export * from "./auth";
export * from "./mail";
export * from "./sites";
