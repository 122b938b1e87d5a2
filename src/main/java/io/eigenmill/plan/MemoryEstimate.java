package io.eigenmill.plan;

import java.util.Locale;

/**
 * The largest arrays a method needs, in bytes, on the driver and in one executor task, against the memory available
 * to each. {@code driverLimit} and {@code taskLimit} are half of the JVM heap (driver) and half of the executor heap
 * divided by its concurrent tasks: the other half is left to Spark's own buffers.
 */
public record MemoryEstimate(long driverBytes, long taskBytes, long driverLimit, long taskLimit, String largest) {

  public boolean fits() {
    return driverBytes <= driverLimit && taskBytes <= taskLimit;
  }

  public static String human(long bytes) {
    if (bytes < 1024) {
      return bytes + " B";
    }
    String[] units = {"KiB", "MiB", "GiB", "TiB"};
    double v = bytes;
    int u = -1;
    while (v >= 1024 && u < units.length - 1) {
      v /= 1024;
      u++;
    }
    return String.format(Locale.ROOT, "%.1f %s", v, units[u]);
  }

  public String describe() {
    return "driver " + human(driverBytes) + " of " + human(driverLimit) + " allowed, executor task "
        + human(taskBytes) + " of " + human(taskLimit) + " allowed (largest array: " + largest + ")";
  }
}
