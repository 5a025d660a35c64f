import pkg from '../../../package.json' with { type: 'json' };

/** The app version reported by the health endpoint and the footer. */
export const APP_VERSION: string = pkg.version;
