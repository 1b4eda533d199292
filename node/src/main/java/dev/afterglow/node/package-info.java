/** The node's command line and demo. */
package dev.afterglow.node;
