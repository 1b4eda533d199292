/** Connection-level protection shared by every TCP listener: per-address limits and timeouts. */
package dev.afterglow.node.guard;
