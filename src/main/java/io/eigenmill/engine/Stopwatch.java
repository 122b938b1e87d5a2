package io.eigenmill.engine;

import java.util.LinkedHashMap;
import java.util.Map;

/** Wall time per stage, in seconds, in the order the stages ran. */
public final class Stopwatch {
  private final LinkedHashMap<String, Double> seconds = new LinkedHashMap<>();
  private long started = System.nanoTime();

  /** Ends the current stage under {@code name} and starts the next one. */
  public void lap(String name) {
    long now = System.nanoTime();
    seconds.merge(name, (now - started) / 1e9, Double::sum);
    started = now;
  }

  /** Starts the next stage now, without recording the time since the last lap (timed elsewhere). */
  public void restart() {
    started = System.nanoTime();
  }

  public Map<String, Double> timings() {
    return new LinkedHashMap<>(seconds);
  }
}
