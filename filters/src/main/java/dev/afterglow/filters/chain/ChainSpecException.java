package dev.afterglow.filters.chain;

/** A chain description that cannot be parsed or whose values are out of range. The message names the setting, the value and the limit. */
public final class ChainSpecException extends IllegalArgumentException {
    public ChainSpecException(String message) {
        super(message);
    }
}
