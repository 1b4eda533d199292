package dev.afterglow.node.pipeline;

/** How a packet reached the node. */
public enum Transport { TCP, UDP, KAFKA }
