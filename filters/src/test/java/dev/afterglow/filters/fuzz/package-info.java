/**
 * Fuzzing helpers: {@link dev.afterglow.filters.fuzz.FuzzTarget} marks a class of jqwik properties
 * as fuzz targets run by {@link dev.afterglow.filters.fuzz.FuzzGuard}; {@link dev.afterglow.filters.fuzz.FuzzInputs}
 * holds shared input generators. Shipped to the node's tests in this module's test jar.
 */
package dev.afterglow.filters.fuzz;
