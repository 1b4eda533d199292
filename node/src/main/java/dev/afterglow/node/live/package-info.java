/**
 * The live view: a browser page served by the node's HTTP server and a WebSocket that carries a
 * sensor's latest frame, its raw event activity and its stats. Nothing here runs unless a viewer
 * is connected; the sensor's pipeline thread only checks a volatile flag per packet.
 */
package dev.afterglow.node.live;
