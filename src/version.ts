/** The tool's version, recorded in every result file. Keep in step with package.json. */
export const TOOL_VERSION = '0.1.0';
