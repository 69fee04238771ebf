/** Tool version, written into every result.json. Keep in step with the package.json files. */
export const VERSION = '0.1.0';
