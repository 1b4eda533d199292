/** Event generation from known log intensity, for the synthetic sensor and for tests. */
package dev.afterglow.filters.synth;
