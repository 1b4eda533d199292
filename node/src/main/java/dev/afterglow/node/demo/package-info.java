/** The built-in demo: a synthetic sensor played into a node as a real sensor would, and PNG output. */
package dev.afterglow.node.demo;
