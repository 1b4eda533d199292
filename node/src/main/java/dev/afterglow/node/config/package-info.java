/** The node's configuration: a YAML file (kebab-case keys) with defaults for everything, validated at start. */
package dev.afterglow.node.config;
