/**
 * Emission wavelength assumed when neither the field nor the study's panel gives one (nm). Ingestion (spots shown at
 * registration), linking (PSF width of the joint fit and the spot match radius) and the command line all use this one
 * value, so the spots an analyst registers against are the ones linking works with. 600 nm lies in the middle of the
 * usual visible dyes (about 520–670 nm), so the PSF width is off by at most ~15 % for any of them.
 */
export const DEFAULT_EMISSION_NM = 600;

/** Objective numerical aperture assumed when the field does not give one (oil immersion, dimensionless). */
export const DEFAULT_NUMERICAL_APERTURE = 1.4;
