// The tool version written into generated files and capture headers; kept equal to package.json's
// "version" by tests/version.test.ts.
export const TOOL_VERSION = '0.1.0';
