/** The compact binary layout of events inside a packet, and its allocation-free decoder. */
package dev.afterglow.filters.codec;
