package io.eigenmill.math;

import io.eigenmill.kmeans.math.NearestKeys;
import java.util.function.Supplier;

/**
 * How a kernel with a SIMD form ({@link NearestKeys}, {@link ShiftedCopy}) is picked: the SIMD form when the JVM
 * resolved {@code jdk.incubator.vector} (the launchers pass {@code --add-modules=jdk.incubator.vector}; see the README
 * for spark-submit), it loads, and it has at least 4 double lanes (below that it would not pay), unless the system
 * property {@code eigenmill.simd} is {@code off}; the scalar form otherwise.
 */
public final class SimdChoice {
  /** The system property's value, "auto" when unset. */
  public static final String SETTING = System.getProperty("eigenmill.simd", "auto");
  /** Whether the JVM resolved the vector module. */
  public static final boolean MODULE = ModuleLayer.boot().findModule("jdk.incubator.vector").isPresent();

  private SimdChoice() {}

  /**
   * The kernel {@code simd} supplies, or {@code scalar}, by the rule of the class comment. {@code simd} returns null
   * when the machine has fewer than {@link #MIN_LANES} lanes; it must name the SIMD class only in its body (a lambda,
   * not a method reference), so that the class loads here, where a JVM without the module only gets a
   * {@link LinkageError}.
   */
  public static <K> K choose(String setting, boolean moduleResolved, Supplier<K> simd, K scalar) {
    if ("off".equalsIgnoreCase(setting) || !moduleResolved) {
      return scalar;
    }
    try {
      K kernel = simd.get();
      return kernel != null ? kernel : scalar;
    } catch (LinkageError e) {
      return scalar;
    }
  }

  /** Fewer double lanes than this do not pay for a SIMD kernel. */
  public static final int MIN_LANES = 4;
}
