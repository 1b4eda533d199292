package dev.afterglow.filters.fuzz;

import java.lang.annotation.ElementType;
import java.lang.annotation.Retention;
import java.lang.annotation.RetentionPolicy;
import java.lang.annotation.Target;
import net.jqwik.api.Tag;
import net.jqwik.api.lifecycle.AddLifecycleHook;
import net.jqwik.api.lifecycle.PropagationMode;

/**
 * Marks a class of fuzz targets: jqwik {@code @Property} methods without {@code tries}, run under
 * {@link FuzzGuard} (number of inputs and seed from the build, time and inputs/s printed, slow or
 * hanging inputs reported) and tagged {@code fuzz} so the {@code fuzz} Maven profile runs only them.
 * Name such classes {@code *FuzzTest}. See DEVELOPERS.md, "Fuzzing".
 */
@Retention(RetentionPolicy.RUNTIME)
@Target(ElementType.TYPE)
@Tag(FuzzTarget.TAG)
@AddLifecycleHook(value = FuzzGuard.class, propagateTo = PropagationMode.ALL_DESCENDANTS)
public @interface FuzzTarget {
    /** The JUnit Platform tag of fuzz targets. */
    String TAG = "fuzz";
}
