package io.eigenmill.demo;

/**
 * The layout of the demo fleet: for every host its region, workload, hardware generation, fixed quirks (popularity,
 * rack inlet offset, fan trims, store fill, clock bias) and, for a few hosts, one injected fault window. A pure
 * function of (seed, hosts, intervals): every executor rebuilds the same layout from these three numbers, so the
 * closure shipped to tasks stays a few bytes.
 *
 * <p>Regions take contiguous blocks of hosts in proportion to their share; workloads and hardware are dealt by
 * share over two seeded permutations, so every type is present once there are about ten hosts. Faults go to
 * max(4, hosts / 40) distinct hosts, the four kinds in turn, each over a window of 6-12 % of the intervals (at least
 * 3) that ends before the last, possibly partial, interval; a fleet with fewer than 8 intervals has no faults.
 *
 * <p>Cost: O(hosts) time and memory.
 */
final class Fleet {
  static final int FANS = 4;
  /** Fans that may fail (the last fan's sensor drops out now and then, so it is kept out of the fault). */
  static final int FAILING_FAN_CHOICES = 3;
  static final long MIN_INTERVALS_FOR_FAULTS = 8;

  private static final long HOST_STREAM = 11;
  private static final long DEAL_STREAM = 12;
  private static final long FAULT_STREAM = 13;

  final int hosts;
  final long intervals;
  final Region[] region;
  final Workload[] workload;
  final Hardware[] hardware;
  final String[] name;
  final double[] popularity;
  final double[] inletOffsetC;
  /** hosts x FANS, relative trim of each fan's speed. */
  final double[] fanTrim;
  final double[] storeFillPct;
  final double[] storePhase;
  final double[] ntpBiasMs;
  /** Interval of the day (0-287) at which the host's cache process restarts every day. */
  final int[] restartInterval;
  /** The fault of each host, or null; its window is [faultStart, faultEnd). */
  final Fault[] fault;
  final long[] faultStart;
  final long[] faultEnd;
  final int[] failingFan;

  Fleet(long seed, int hosts, long intervals) {
    this.hosts = hosts;
    this.intervals = intervals;
    region = new Region[hosts];
    workload = new Workload[hosts];
    hardware = new Hardware[hosts];
    name = new String[hosts];
    popularity = new double[hosts];
    inletOffsetC = new double[hosts];
    fanTrim = new double[hosts * FANS];
    storeFillPct = new double[hosts];
    storePhase = new double[hosts];
    ntpBiasMs = new double[hosts];
    restartInterval = new int[hosts];
    fault = new Fault[hosts];
    faultStart = new long[hosts];
    faultEnd = new long[hosts];
    failingFan = new int[hosts];
    NoiseSource noise = new NoiseSource();
    placeRegions();
    deal(seed, noise);
    drawQuirks(seed, noise);
    scheduleFaults(seed, noise);
  }

  /** The fault active on {@code host} at {@code interval}, or null. */
  Fault faultAt(int host, long interval) {
    Fault f = fault[host];
    return f != null && interval >= faultStart[host] && interval < faultEnd[host] ? f : null;
  }

  private void placeRegions() {
    double cumulative = 0;
    int first = 0;
    for (int r = 0; r < Region.ALL.length; r++) {
      cumulative += Region.ALL[r].share;
      int end = r == Region.ALL.length - 1 ? hosts : (int) Math.min(hosts, Math.round(cumulative * hosts));
      for (int h = first; h < end; h++) {
        region[h] = Region.ALL[r];
        name[h] = String.format("edge-%s-%03d", Region.ALL[r].code, h - first + 1);
      }
      first = Math.max(first, end);
    }
  }

  private void deal(long seed, NoiseSource noise) {
    int[] order = permutation(seed, 0, noise);
    for (int p = 0; p < hosts; p++) {
      workload[order[p]] = Workload.ALL[slot(p, workloadShares())];
    }
    order = permutation(seed, 1, noise);
    for (int p = 0; p < hosts; p++) {
      hardware[order[p]] = Hardware.ALL[slot(p, hardwareShares())];
    }
  }

  private void drawQuirks(long seed, NoiseSource noise) {
    for (int h = 0; h < hosts; h++) {
      noise.reset(NoiseSource.key(seed, HOST_STREAM, h, 0));
      popularity[h] = Math.exp(noise.gaussian(0, 0.15));
      inletOffsetC[h] = noise.gaussian(0, 1.2);
      for (int f = 0; f < FANS; f++) {
        fanTrim[h * FANS + f] = noise.gaussian(0, 0.03);
      }
      storeFillPct[h] = noise.uniform(70, 90);
      storePhase[h] = noise.uniform(0, 2 * Math.PI);
      ntpBiasMs[h] = noise.gaussian(0, 0.8);
      restartInterval[h] = noise.below(TelemetryModel.INTERVALS_PER_DAY);
    }
  }

  private void scheduleFaults(long seed, NoiseSource noise) {
    if (intervals < MIN_INTERVALS_FOR_FAULTS) {
      return;
    }
    int count = Math.min(hosts, Math.max(Fault.ALL.length, hosts / 40));
    int[] order = permutation(seed, 2, noise);
    noise.reset(NoiseSource.key(seed, FAULT_STREAM, hosts, intervals));
    for (int i = 0; i < count; i++) {
      int h = order[i];
      long length = Math.max(3, Math.round(intervals * noise.uniform(0.06, 0.12)));
      long earliest = intervals / 10;
      long latest = Math.max(earliest, intervals - 1 - length);
      fault[h] = Fault.ALL[i % Fault.ALL.length];
      faultStart[h] = earliest + (long) (noise.uniform() * (latest - earliest + 1));
      faultEnd[h] = Math.min(intervals - 1, faultStart[h] + length);
      failingFan[h] = noise.below(FAILING_FAN_CHOICES);
    }
  }

  /** A seeded Fisher-Yates permutation of the hosts. */
  private int[] permutation(long seed, long which, NoiseSource noise) {
    int[] order = new int[hosts];
    for (int i = 0; i < hosts; i++) {
      order[i] = i;
    }
    noise.reset(NoiseSource.key(seed, DEAL_STREAM, which, hosts));
    for (int i = hosts - 1; i > 0; i--) {
      int j = (int) ((noise.nextLong() >>> 1) % (i + 1));
      int t = order[i];
      order[i] = order[j];
      order[j] = t;
    }
    return order;
  }

  /** The category of position {@code p} when hosts are dealt in proportion to {@code shares}. */
  private int slot(int p, double[] shares) {
    double x = (p + 0.5) / hosts;
    double cumulative = 0;
    for (int k = 0; k < shares.length; k++) {
      cumulative += shares[k];
      if (x < cumulative) {
        return k;
      }
    }
    return shares.length - 1;
  }

  private static double[] workloadShares() {
    double[] s = new double[Workload.ALL.length];
    for (int k = 0; k < s.length; k++) {
      s[k] = Workload.ALL[k].share;
    }
    return s;
  }

  private static double[] hardwareShares() {
    double[] s = new double[Hardware.ALL.length];
    for (int k = 0; k < s.length; k++) {
      s[k] = Hardware.ALL[k].share;
    }
    return s;
  }
}
