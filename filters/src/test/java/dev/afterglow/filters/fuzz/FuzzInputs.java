package dev.afterglow.filters.fuzz;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Random;
import java.util.function.Function;
import net.jqwik.api.Arbitraries;
import net.jqwik.api.Arbitrary;

/**
 * Input generators shared by the fuzz targets: byte streams cut into arbitrary pieces, numbers
 * crowded around the limits where off-by-one and overflow bugs live, text from a small alphabet.
 *
 * <p>Structured inputs are written as plain functions of a {@link Random} and handed to jqwik with
 * {@link #from}: jqwik seeds the random source (so a printed seed replays the run) and counts the
 * inputs. Such inputs do not shrink, and a failure prints the whole input; building them from
 * jqwik's combinators shrinks, but cost about a millisecond per input, too slow for a million.
 */
public final class FuzzInputs {
    private FuzzInputs() {
    }

    /** jqwik inputs made by {@code generator} from jqwik's seeded random source. */
    public static <T> Arbitrary<T> from(Function<Random, T> generator) {
        return Arbitraries.randomValue(generator);
    }

    /** Sizes to cut a stream with, used in turn: mostly small (a byte at a time is common), sometimes large. */
    public static int[] chunkSizes(Random random) {
        int[] sizes = new int[1 + random.nextInt(16)];
        for (int i = 0; i < sizes.length; i++) {
            int kind = random.nextInt(7);
            sizes[i] = 1 + (kind < 4 ? random.nextInt(8) : kind < 6 ? random.nextInt(64) : random.nextInt(4096));
        }
        return sizes;
    }

    /** {@code stream} cut into pieces of {@code sizes[0]}, {@code sizes[1]}, ... (cyclically) bytes. */
    public static List<byte[]> cut(byte[] stream, int[] sizes) {
        List<byte[]> pieces = new ArrayList<>();
        int at = 0;
        for (int i = 0; at < stream.length; i++) {
            int n = Math.min(sizes[i % sizes.length], stream.length - at);
            pieces.add(Arrays.copyOfRange(stream, at, at + n));
            at += n;
        }
        return pieces;
    }

    /**
     * A long within {@code spread} of one of {@code pivots} (wrapping) three times in four, any
     * long otherwise: for sequence numbers, times and counters near 0, 2^31, 2^32, 2^63 and other limits.
     */
    public static long near(Random random, long spread, long... pivots) {
        if (random.nextInt(4) == 0) {
            return random.nextLong();
        }
        long pivot = pivots[random.nextInt(pivots.length)];
        long offset = spread == 0 ? 0 : Math.floorMod(random.nextLong(), 2 * spread + 1) - spread;
        return pivot + offset;
    }

    /** An int within {@code spread} of one of {@code pivots} three times in four, any int otherwise. */
    public static int near(Random random, int spread, int... pivots) {
        if (random.nextInt(4) == 0) {
            return random.nextInt();
        }
        return pivots[random.nextInt(pivots.length)] + random.nextInt(2 * spread + 1) - spread;
    }

    /** One of {@code options}. */
    @SafeVarargs
    public static <T> T oneOf(Random random, T... options) {
        return options[random.nextInt(options.length)];
    }

    /** Up to {@code maxLength} characters from {@code alphabet}, with one in twenty any UTF-16 unit. */
    public static String textFrom(Random random, String alphabet, int maxLength) {
        int n = random.nextInt(maxLength + 1);
        StringBuilder b = new StringBuilder(n);
        for (int i = 0; i < n; i++) {
            b.append(random.nextInt(20) == 0 ? (char) random.nextInt(0x10000) : alphabet.charAt(random.nextInt(alphabet.length())));
        }
        return b.toString();
    }

    /** Up to {@code maxLength} random bytes. */
    public static byte[] bytes(Random random, int maxLength) {
        byte[] b = new byte[random.nextInt(maxLength + 1)];
        random.nextBytes(b);
        return b;
    }

    /**
     * {@code text} with 1 to 4 character edits (insert, delete, replace with a character from
     * {@code alphabet}): near-misses of valid input reach deeper into a parser than random text.
     */
    public static String edit(Random random, String text, String alphabet) {
        StringBuilder b = new StringBuilder(text);
        for (int k = 1 + random.nextInt(4); k > 0; k--) {
            char c = alphabet.charAt(random.nextInt(alphabet.length()));
            int op = random.nextInt(3);
            if (b.length() == 0 || op == 0) {
                b.insert(random.nextInt(b.length() + 1), c);
            } else if (op == 1) {
                b.deleteCharAt(random.nextInt(b.length()));
            } else {
                b.setCharAt(random.nextInt(b.length()), c);
            }
        }
        return b.toString();
    }

    /** {@code bytes} with byte edits (flip a bit, set a byte, insert, delete, truncate): mostly 1 or 2, up to 8. */
    public static byte[] mutate(Random random, byte[] bytes) {
        byte[] b = bytes.clone();
        for (int k = 1 + random.nextInt(random.nextInt(4) == 0 ? 8 : 2); k > 0; k--) {
            int op = random.nextInt(5);
            if (b.length == 0 || op == 2) {
                int at = random.nextInt(b.length + 1);
                byte[] longer = new byte[b.length + 1];
                System.arraycopy(b, 0, longer, 0, at);
                longer[at] = (byte) random.nextInt();
                System.arraycopy(b, at, longer, at + 1, b.length - at);
                b = longer;
            } else if (op == 0) {
                int at = random.nextInt(b.length);
                b[at] ^= (byte) (1 << random.nextInt(8));
            } else if (op == 1) {
                b[random.nextInt(b.length)] = oneOf(random, (byte) 0, (byte) 0x7F, (byte) 0x80, (byte) 0xFF, (byte) random.nextInt());
            } else if (op == 3) {
                int at = random.nextInt(b.length);
                byte[] shorter = new byte[b.length - 1];
                System.arraycopy(b, 0, shorter, 0, at);
                System.arraycopy(b, at + 1, shorter, at, b.length - at - 1);
                b = shorter;
            } else {
                b = Arrays.copyOf(b, random.nextInt(b.length));
            }
        }
        return b;
    }

    /** Bytes as hex for failure messages, the first 1024 only. */
    public static String hex(byte[] bytes) {
        StringBuilder b = new StringBuilder();
        int n = Math.min(bytes.length, 1024);
        for (int i = 0; i < n; i++) {
            b.append(Character.forDigit((bytes[i] >> 4) & 0xF, 16)).append(Character.forDigit(bytes[i] & 0xF, 16));
        }
        return n < bytes.length ? b.append("... (").append(bytes.length).append(" bytes)").toString() : b.toString();
    }

    /** {@code text} cut to its first 4000 characters for failure messages. */
    public static String abbreviate(String text) {
        return text.length() <= 4000 ? text : text.substring(0, 4000) + "... (" + text.length() + " chars)";
    }
}
