// Stored with every analysis so a result can be traced to the build that produced it.
export const APP_VERSION = '0.1.0';
