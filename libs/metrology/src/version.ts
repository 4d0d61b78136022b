/**
 * Recorded with every frozen result (calibrations, balance checks). Bump the
 * minor version when a computation's results can change, the major version
 * when inputs or outputs change shape.
 */
export const METROLOGY_LIBRARY_VERSION = '1.0.0';
