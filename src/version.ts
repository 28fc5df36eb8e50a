/** The tool's version, written into every manifest. Keep in step with package.json. */
export const VERSION = '0.1.0';
