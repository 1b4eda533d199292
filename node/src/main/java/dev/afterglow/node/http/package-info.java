/** The node's HTTP endpoints: Prometheus metrics, health, readiness and a JSON status. */
package dev.afterglow.node.http;
