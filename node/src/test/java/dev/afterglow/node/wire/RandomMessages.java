package dev.afterglow.node.wire;

import com.google.protobuf.ByteString;
import com.google.protobuf.Descriptors.EnumValueDescriptor;
import com.google.protobuf.Descriptors.FieldDescriptor;
import com.google.protobuf.Descriptors.OneofDescriptor;
import com.google.protobuf.Message;
import dev.afterglow.filters.fuzz.FuzzInputs;
import java.util.List;
import java.util.Random;

/**
 * Random protobuf messages of any type, filled field by field from the type's descriptor, so they
 * cover every field of the schema, new ones included, without a generator per message: numbers at
 * their limits, NaN and infinite floats, text with characters outside the Basic Multilingual Plane,
 * bytes of any length, at most one member of each oneof, nested messages a few levels deep. For
 * fuzz targets, e.g. {@code RandomMessages.fill(random, Subscribe.newBuilder()).build()}.
 */
public final class RandomMessages {
    private static final int MAX_DEPTH = 4;

    private RandomMessages() {
    }

    /** Sets a random selection of {@code builder}'s fields to random values and returns it. */
    public static <B extends Message.Builder> B fill(Random r, B builder) {
        fill(r, builder, 0);
        return builder;
    }

    private static void fill(Random r, Message.Builder b, int depth) {
        for (FieldDescriptor f : b.getDescriptorForType().getFields()) {
            if (f.getRealContainingOneof() == null && r.nextInt(5) < 3) {
                set(r, b, f, depth);
            }
        }
        for (OneofDescriptor oneof : b.getDescriptorForType().getRealOneofs()) {
            List<FieldDescriptor> members = oneof.getFields();
            int pick = r.nextInt(members.size() + 1); // members.size(): none of them
            if (pick < members.size()) {
                set(r, b, members.get(pick), depth);
            }
        }
    }

    private static void set(Random r, Message.Builder b, FieldDescriptor f, int depth) {
        if (f.getJavaType() == FieldDescriptor.JavaType.MESSAGE && depth >= MAX_DEPTH) {
            return;
        }
        if (f.isRepeated()) {
            for (int n = r.nextInt(4); n > 0; n--) {
                b.addRepeatedField(f, value(r, b, f, depth));
            }
        } else {
            b.setField(f, value(r, b, f, depth));
        }
    }

    private static Object value(Random r, Message.Builder b, FieldDescriptor f, int depth) {
        return switch (f.getJavaType()) {
            case INT -> FuzzInputs.near(r, 2, 0, Integer.MAX_VALUE, Integer.MIN_VALUE, 1 << 16);
            case LONG -> FuzzInputs.near(r, 2L, 0L, Long.MAX_VALUE, Long.MIN_VALUE, 1L << 32);
            case FLOAT -> r.nextInt(4) == 0
                    ? FuzzInputs.oneOf(r, Float.NaN, Float.POSITIVE_INFINITY, -0.0f, Float.MIN_VALUE, Float.MAX_VALUE)
                    : (float) (r.nextGaussian() * 1000);
            case DOUBLE -> r.nextInt(4) == 0
                    ? FuzzInputs.oneOf(r, Double.NaN, Double.NEGATIVE_INFINITY, -0.0, Double.MIN_VALUE)
                    : r.nextGaussian() * 1e6;
            case BOOLEAN -> r.nextBoolean();
            case STRING -> text(r);
            case BYTE_STRING -> {
                byte[] bytes = FuzzInputs.bytes(r, r.nextInt(8) == 0 ? 8192 : 48);
                yield ByteString.copyFrom(bytes);
            }
            case ENUM -> {
                List<EnumValueDescriptor> values = f.getEnumType().getValues();
                yield values.get(r.nextInt(values.size()));
            }
            case MESSAGE -> {
                Message.Builder nested = b.newBuilderForField(f);
                fill(r, nested, depth + 1);
                yield nested.build();
            }
        };
    }

    /** Well-formed UTF-16 text (no lone surrogates, which UTF-8 cannot carry): ASCII, accents, emoji. */
    private static String text(Random r) {
        StringBuilder s = new StringBuilder();
        for (int n = r.nextInt(24); n > 0; n--) {
            switch (r.nextInt(6)) {
                case 0 -> s.appendCodePoint(0x1F300 + r.nextInt(0x300)); // outside the BMP: a surrogate pair
                case 1 -> s.appendCodePoint(0xA0 + r.nextInt(0xD7FF - 0xA0));
                case 2 -> s.append((char) r.nextInt(0x20));              // control characters
                default -> s.append((char) (0x20 + r.nextInt(0x5F)));
            }
        }
        return s.toString();
    }
}
