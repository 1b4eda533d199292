/** Sensor ingest over TCP (delimited envelopes, hello first) and UDP (one envelope per datagram). */
package dev.afterglow.node.ingest;
