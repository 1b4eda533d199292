/** The node's HTTP endpoints: Prometheus metrics, health, readiness, a JSON status and the live view page. */
package dev.afterglow.node.http;
