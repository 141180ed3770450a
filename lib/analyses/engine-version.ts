import packageJson from "../../package.json";

/** The version of PhenoPool (package.json) that fitted a run, stored with it. */
export const ENGINE_VERSION: string = packageJson.version;
