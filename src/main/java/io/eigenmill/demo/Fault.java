package io.eigenmill.demo;

/** The faults injected on a few hosts over contiguous time windows; the label is the {@code fault} column's value. */
enum Fault {
  /** One fan's speed collapses; the other fans ramp up and every temperature rises. */
  FAILING_FAN("failing_fan"),
  /** The cache store disks saturate: utilisation near 100 %, queue depth, latency, iowait and 5xx spike. */
  SATURATED_DISK("saturated_disk"),
  /** Retransmits and drops spike, throughput falls, connections pile up, time to first byte grows. */
  NETWORK_ERRORS("network_errors"),
  /** The hit ratio drops, origin fetch and disk writes rise, latency and 5xx grow. */
  CACHE_DEGRADATION("cache_degradation");

  static final Fault[] ALL = values();

  final String label;

  Fault(String label) {
    this.label = label;
  }
}
