package dev.afterglow.filters.learned;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.util.HashMap;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import java.util.zip.ZipEntry;
import java.util.zip.ZipInputStream;

/**
 * Reads numpy's {@code .npz} archives (a zip of {@code .npy} files, as written by
 * {@code numpy.savez}) for the test fixtures: little-endian int8, int32, int64, float32 and
 * float64 arrays in C order. The {@code .npy} layout is numpy's documented format (NEP 1): the
 * magic {@code \x93NUMPY}, a version, a header length (2 bytes in version 1, 4 in 2 and 3), a
 * Python dict literal with {@code descr}, {@code fortran_order} and {@code shape}, then the data.
 */
public final class Npz {
    /** One array: its shape and its values widened to double (exact for the types read here). */
    public record Array(long[] shape, double[] values) {
        /** Value at flat index {@code i}. */
        public double at(int i) {
            return values[i];
        }

        /** Values as floats (exact for a float32 array). */
        public float[] floats() {
            float[] f = new float[values.length];
            for (int i = 0; i < f.length; i++) {
                f[i] = (float) values[i];
            }
            return f;
        }
    }

    private static final Pattern DESCR = Pattern.compile("'descr':\\s*'([<>|=])([a-z])(\\d+)'");
    private static final Pattern FORTRAN = Pattern.compile("'fortran_order':\\s*(True|False)");
    private static final Pattern SHAPE = Pattern.compile("'shape':\\s*\\(([^)]*)\\)");

    private Npz() {
    }

    /** Every array of the archive, by name (without {@code .npy}). */
    public static Map<String, Array> read(InputStream in) throws IOException {
        Map<String, Array> arrays = new HashMap<>();
        try (ZipInputStream zip = new ZipInputStream(in)) {
            for (ZipEntry e; (e = zip.getNextEntry()) != null; ) {
                String name = e.getName().endsWith(".npy") ? e.getName().substring(0, e.getName().length() - 4) : e.getName();
                ByteArrayOutputStream bytes = new ByteArrayOutputStream();
                zip.transferTo(bytes);
                arrays.put(name, npy(name, ByteBuffer.wrap(bytes.toByteArray())));
            }
        }
        return arrays;
    }

    private static Array npy(String name, ByteBuffer b) {
        byte[] magic = new byte[6];
        b.get(magic);
        if ((magic[0] & 0xff) != 0x93 || !new String(magic, 1, 5, StandardCharsets.US_ASCII).equals("NUMPY")) {
            throw new IllegalArgumentException(name + ": not an .npy array");
        }
        int major = b.get();
        b.get(); // minor
        b.order(ByteOrder.LITTLE_ENDIAN);
        int headerLength = major == 1 ? Short.toUnsignedInt(b.getShort()) : b.getInt();
        byte[] header = new byte[headerLength];
        b.get(header);
        String h = new String(header, StandardCharsets.ISO_8859_1);
        Matcher d = DESCR.matcher(h);
        Matcher f = FORTRAN.matcher(h);
        Matcher s = SHAPE.matcher(h);
        if (!d.find() || !f.find() || !s.find()) {
            throw new IllegalArgumentException(name + ": unreadable header " + h);
        }
        if (f.group(1).equals("True")) {
            throw new IllegalArgumentException(name + ": Fortran order not read here");
        }
        if (d.group(1).equals(">")) {
            throw new IllegalArgumentException(name + ": big-endian not read here");
        }
        String[] dims = s.group(1).split(",");
        long count = 1;
        java.util.List<Long> shape = new java.util.ArrayList<>();
        for (String dim : dims) {
            if (!dim.isBlank()) {
                long v = Long.parseLong(dim.strip());
                shape.add(v);
                count *= v;
            }
        }
        double[] values = new double[Math.toIntExact(count)];
        String type = d.group(2) + d.group(3);
        for (int i = 0; i < values.length; i++) {
            values[i] = switch (type) {
                case "i1", "b1" -> b.get();
                case "i4" -> b.getInt();
                case "i8" -> b.getLong();
                case "f4" -> b.getFloat();
                case "f8" -> b.getDouble();
                default -> throw new IllegalArgumentException(name + ": type " + d.group(0) + " not read here");
            };
        }
        return new Array(shape.stream().mapToLong(Long::longValue).toArray(), values);
    }
}
