package dev.afterglow.filters.recon;

/**
 * Least-squares fit of {@code y(t) ≈ s·sin(w·t) + c·cos(w·t) + d} at a known angular frequency w,
 * accumulated sample by sample (normal equations, solved once at the end). The fitted sinusoid is
 * {@code R·sin(w·t + φ)} with {@code R = hypot(s, c)} and {@code φ = atan2(c, s)}.
 */
final class SinusoidFit {
    private final double w;
    // Upper triangle of the 3x3 normal matrix (basis sin, cos, 1) and the right-hand side.
    private double ss;
    private double sc;
    private double s1;
    private double cc;
    private double c1;
    private double n;
    private double ys;
    private double yc;
    private double y1;
    private boolean solved;
    private double sinCoeff;
    private double cosCoeff;
    private double offset;

    SinusoidFit(double angularFrequencyRadPerS) {
        this.w = angularFrequencyRadPerS;
    }

    /** Adds one sample {@code y} taken at {@code tSeconds}. */
    void add(double tSeconds, double y) {
        double s = Math.sin(w * tSeconds);
        double c = Math.cos(w * tSeconds);
        ss += s * s;
        sc += s * c;
        s1 += s;
        cc += c * c;
        c1 += c;
        n += 1;
        ys += y * s;
        yc += y * c;
        y1 += y;
        solved = false;
    }

    /** Number of samples added. */
    long samples() {
        return (long) n;
    }

    /** Fitted amplitude R. */
    double amplitude() {
        solve();
        return Math.hypot(sinCoeff, cosCoeff);
    }

    /** Fitted phase φ in radians, in (-π, π]. */
    double phaseRad() {
        solve();
        return Math.atan2(cosCoeff, sinCoeff);
    }

    /** Fitted constant term d. */
    double offset() {
        solve();
        return offset;
    }

    private void solve() {
        if (solved) {
            return;
        }
        if (n < 3) {
            throw new IllegalStateException("need at least 3 samples, have " + (long) n);
        }
        double[][] m = {
            {ss, sc, s1, ys},
            {sc, cc, c1, yc},
            {s1, c1, n, y1},
        };
        // Gaussian elimination with partial pivoting on the augmented 3x4 matrix.
        for (int col = 0; col < 3; col++) {
            int pivot = col;
            for (int r = col + 1; r < 3; r++) {
                if (Math.abs(m[r][col]) > Math.abs(m[pivot][col])) {
                    pivot = r;
                }
            }
            double[] tmp = m[col];
            m[col] = m[pivot];
            m[pivot] = tmp;
            for (int r = col + 1; r < 3; r++) {
                double f = m[r][col] / m[col][col];
                for (int k = col; k < 4; k++) {
                    m[r][k] -= f * m[col][k];
                }
            }
        }
        double[] x = new double[3];
        for (int r = 2; r >= 0; r--) {
            double v = m[r][3];
            for (int k = r + 1; k < 3; k++) {
                v -= m[r][k] * x[k];
            }
            x[r] = v / m[r][r];
        }
        sinCoeff = x[0];
        cosCoeff = x[1];
        offset = x[2];
        solved = true;
    }
}
