package io.eigenmill.demo;

import static io.eigenmill.demo.Metric.*;

import java.util.Arrays;

/**
 * The latent-factor model behind one telemetry row. A row of host h at interval i is a pure function of
 * (seed, fleet layout, h, i): the random stream is {@link NoiseSource#reset reset} to a key of (seed, h, i) first.
 *
 * <p>The latent drivers are: the host's demand (its workload's daily curve in the region's local time, weekend
 * effect, region-wide live events, fleet-wide software release days, a smooth hourly jitter per host and the host's
 * popularity); the workload (object size, cacheability, connection habits); the hardware generation (capacity, CPU
 * cost, disk speed, idle power, fan base speed); thermal coupling (CPU temperature follows CPU load and the machine
 * room, fans follow CPU temperature, power follows load and fans, exhaust follows power over airflow); a smooth
 * machine-room temperature wander and a peering congestion per region; and a daily memory sawtooth per host (the
 * cache process restarts once a day). Faults override a few metrics and propagate through the same couplings. Six
 * standardised summaries of the row ({@link #factors}) drive the extra metrics.
 *
 * <p>Missing cells: inlet temperature (0.4 %), NVMe temperature (0.7 %) and fan 4 (0.5 %) drop out independently;
 * PSU efficiency reads NaN with probability 2e-4.
 *
 * <p>Cost: about 90 random draws and a few transcendental calls per row (about 2 microseconds on one core); no
 * allocation per row. One instance per task.
 */
final class TelemetryModel {
  static final int FACTORS = 6;
  static final int MINUTES_PER_INTERVAL = 5;
  static final int INTERVALS_PER_HOUR = 12;
  static final int INTERVALS_PER_DAY = 288;
  static final double INLET_DROPOUT = 0.004;
  static final double NVME_DROPOUT = 0.007;
  static final double FAN_DROPOUT = 0.005;
  static final double PSU_NAN = 2e-4;

  private static final long ROW_STREAM = 21;
  private static final long JITTER_STREAM = 22;
  private static final long LIVE_EVENT_STREAM = 23;
  private static final long RELEASE_STREAM = 24;
  private static final long ROOM_STREAM = 25;
  private static final long CONGESTION_STREAM = 26;
  private static final double KPPS_PER_GBPS = 1e6 / 8 / 1448;
  private static final double MAX_FAN_RPM = 16500;

  /** The metric values of the last computed row, indexed by {@link Metric#ordinal()}. */
  final double[] values = new double[Metric.COUNT];
  /** True where the last row's cell is missing (null in the table). */
  final boolean[] missing = new boolean[Metric.COUNT];
  /** Standardised drivers of the last row: demand, CPU busy, CPU temperature, disk load, egress, hit ratio. */
  final double[] factors = new double[FACTORS];

  private final long seed;
  private final Fleet fleet;
  private final long startEpochDay;
  private final NoiseSource noise;
  private final double[] fans = new double[Fleet.FANS];

  // intermediate quantities of the row being computed
  /** Local hour of the day (fractional) at the interval of the last {@link #demandAt} call. */
  private double localHour;
  /** Local hour of the row being computed. */
  private double rowHour;
  /** Machine-room temperature wander of the host's region, standard normal, smooth over hours. */
  private double roomWander;
  /** Peering congestion of the host's region, >= 0, mostly 0, smooth over hours. */
  private double congestion;
  private double demand;
  private double tx;
  private double req;
  private double hit;
  private double ramHit;
  private double origin;
  private double busy;
  private double util;
  private double readLatency;

  TelemetryModel(long seed, Fleet fleet, long startEpochDay, NoiseSource noise) {
    this.seed = seed;
    this.fleet = fleet;
    this.startEpochDay = startEpochDay;
    this.noise = noise;
  }

  /**
   * Computes the row of {@code host} at {@code interval} into {@link #values}, {@link #missing} and {@link #factors};
   * returns the fault active on it, or null. The noise source is left positioned after the row's draws, so a caller
   * may keep drawing from it (the extra metrics do) and stay deterministic.
   */
  Fault compute(int host, long interval) {
    Workload w = fleet.workload[host];
    Hardware hw = fleet.hardware[host];
    Fault f = fleet.faultAt(host, interval);
    double busyBefore1 = expectedBusy(w, hw, demandAt(host, interval - 1));
    double busyBefore3 = expectedBusy(w, hw, demandAt(host, interval - 3));
    double base = demandAt(host, interval);
    rowHour = localHour;
    int region = fleet.region[host].ordinal();
    roomWander = smooth(ROOM_STREAM, region, interval);
    double c = Math.max(0, smooth(CONGESTION_STREAM, region, interval) - 0.5);
    congestion = c * c;
    noise.reset(NoiseSource.key(seed, ROW_STREAM, host, interval));
    Arrays.fill(missing, false);
    demand = clamp(base * (1 + 0.04 * noise.gaussian()), 0.03, 1.8);
    traffic(host, interval, w, hw, f);
    long connections = network(host, w, f);
    disk(w, hw, f);
    processor(w, hw, f, connections, busyBefore1, busyBefore3);
    memory(host, interval, w, hw, connections);
    http(f);
    thermal(host, hw, f);
    dropouts();
    summarise();
    return f;
  }

  /** The host's demand at an interval without per-row noise (also used for the load averages' history). */
  private double demandAt(int host, long interval) {
    Region r = fleet.region[host];
    Workload w = fleet.workload[host];
    long localMinutes = startEpochDay * 1440 + interval * MINUTES_PER_INTERVAL + r.utcOffsetMinutes;
    long localDay = Math.floorDiv(localMinutes, 1440);
    localHour = Math.floorMod(localMinutes, 1440) / 60.0;
    double d = w.dailyShape(localHour) * fleet.popularity[host];
    if (Math.floorMod(localDay + 3, 7) >= 5) {
      d *= w.weekend; // epoch day 0 was a Thursday: +3 makes Monday 0, so 5 and 6 are the weekend
    }
    d *= 1 + 0.08 * smooth(JITTER_STREAM, host, interval);
    if (w == Workload.LIVE_STREAMING) {
      d *= liveEvent(r, Math.floorDiv(interval, INTERVALS_PER_HOUR));
    } else if (w == Workload.SOFTWARE_DOWNLOADS) {
      d *= releaseDay(localDay);
    }
    return d;
  }

  private void traffic(int host, long interval, Workload w, Hardware hw, Fault f) {
    tx = Math.min(w.txPeakGbps * hw.txScale * demand * (1 + 0.03 * noise.gaussian()), hw.nicGbps * 0.97);
    double objectKib = w.objectKib * Math.exp(0.08 * noise.gaussian());
    req = tx * 1e9 / 8 / (objectKib * 1024);
    if (f == Fault.NETWORK_ERRORS) {
      // the same requests arrive, but clients fall back to lower bit rates and abort slow transfers
      double kept = noise.uniform(0.45, 0.65);
      tx *= kept;
      objectKib *= kept;
    }
    hit = clamp(w.hitRatio - 0.015 * demand + 0.006 * noise.gaussian(), 0.3, 0.999);
    ramHit = clamp(w.ramHitShare + 0.03 * noise.gaussian(), 0.02, 0.98);
    if (f == Fault.CACHE_DEGRADATION) {
      hit -= noise.uniform(0.22, 0.35);
      ramHit *= 0.6;
    }
    origin = tx * (1 - hit) * (1 + 0.05 * noise.gaussian()) + 0.02;
    double originRequests = req * (1 - hit) * (1 + 0.05 * noise.gaussian());
    double fill = fleet.storeFillPct[host];
    put(OBJECT_SIZE, objectKib);
    put(HTTP_REQUESTS, req);
    put(NET_TX, tx);
    put(HIT_RATIO, hit);
    put(RAM_HIT_RATIO, ramHit);
    put(ORIGIN_FETCH, origin);
    put(ORIGIN_REQUESTS, originRequests);
    put(BYTES_SERVED, tx * (1 + 0.02 * noise.gaussian()) * 300 / 8 / 1.073741824);
    put(EVICTIONS, originRequests * noise.uniform(0.85, 1.05));
    put(CACHE_OBJECTS, w.objectsMillions * hw.txScale * fill / 80 * (1 + 0.01 * noise.gaussian()));
    double wave = 2 * Math.sin(2 * Math.PI * interval / (3.0 * INTERVALS_PER_DAY) + fleet.storePhase[host]);
    put(STORE_USED, Math.min(99, fill + wave + 0.3 * noise.gaussian()));
  }

  private long network(int host, Workload w, Fault f) {
    double txKpps = tx * KPPS_PER_GBPS * (1 + 0.02 * noise.gaussian());
    double rx = origin + tx * 0.025 * (1 + 0.05 * noise.gaussian());
    double rxKpps = txKpps * 0.45 + rx * KPPS_PER_GBPS * (1 + 0.02 * noise.gaussian());
    boolean broken = f == Fault.NETWORK_ERRORS;
    double retransmit = fleet.region[host].retransmitPct * Math.exp(0.25 * noise.gaussian())
        * (1 + 0.3 * demand + 3 * congestion) + (broken ? noise.uniform(4, 12) : 0);
    double drops = broken ? noise.uniform(200, 2000)
        : 0.3 * Math.abs(noise.gaussian()) + Math.max(0, rxKpps - 2000) * 0.01;
    double conns = (req * w.keepaliveSeconds * (1 + 0.05 * noise.gaussian()) + 400)
        * (broken ? noise.uniform(1.4, 1.8) : 1);
    double syn = req / 2000 * Math.abs(1 + 0.3 * noise.gaussian()) + (broken ? noise.uniform(50, 200) : 0);
    put(NET_RX, rx);
    put(NET_TX_KPPS, txKpps);
    put(NET_RX_KPPS, rxKpps);
    put(RETRANSMIT, retransmit);
    put(RX_DROPS, drops);
    put(TCP_CONNECTIONS, Math.rint(conns));
    put(SYN_BACKLOG, Math.rint(syn));
    put(TLS_HANDSHAKES, req * w.newSessionShare * (1 + 0.05 * noise.gaussian()) * (broken ? 1.3 : 1));
    return (long) Math.rint(conns);
  }

  private void disk(Workload w, Hardware hw, Fault f) {
    double read = tx * 125 * hit * (1 - ramHit) * (1 + 0.04 * noise.gaussian());
    double write = origin * 125 * 0.9 + 4 + 0.5 * Math.abs(noise.gaussian());
    boolean saturated = f == Fault.SATURATED_DISK;
    util = saturated ? noise.uniform(97, 100)
        : clamp(115 * (read + 1.6 * write) / hw.diskMbPerS + 2 + 0.8 * noise.gaussian(), 0.5, 94);
    double u = util / 100;
    double queue = saturated ? noise.uniform(40, 120) : Math.max(0.01, u / (1 - u + 0.02) * (1 + 0.05 * noise.gaussian()));
    readLatency = saturated ? noise.uniform(25, 140)
        : hw.diskLatencyMs * (1 + 0.9 * queue) * Math.exp(0.1 * noise.gaussian());
    put(DISK_READ, read);
    put(DISK_WRITE, write);
    put(DISK_READ_IOPS, read * 1024 / w.ioKib);
    put(DISK_WRITE_IOPS, write * 1024 / 256 * (1 + 0.03 * noise.gaussian()));
    put(DISK_UTIL, util);
    put(DISK_QUEUE, queue);
    put(DISK_READ_LATENCY, readLatency);
    put(DISK_WRITE_LATENCY, readLatency * 1.4 * Math.exp(0.1 * noise.gaussian()));
  }

  private void processor(Workload w, Hardware hw, Fault f, long connections, double before1, double before3) {
    double user = clamp(userPct(w, hw, tx, req) * (1 + 0.04 * noise.gaussian()), 0.5, 96);
    double system = 0.3 * user + get(NET_TX_KPPS) * 0.004 + 0.4 * Math.abs(noise.gaussian());
    double softirq = (get(NET_TX_KPPS) + get(NET_RX_KPPS)) * 0.0025 * hw.cpuCost + 0.2 * Math.abs(noise.gaussian());
    double u = util / 100;
    double iowait = f == Fault.SATURATED_DISK ? noise.uniform(22, 45)
        : 0.2 + 4 * u * u * u + 0.2 * Math.abs(noise.gaussian());
    busy = clamp((user + system + softirq) / 100, 0, 1);
    double blocked = iowait / 100;
    put(CPU_USER, user);
    put(CPU_SYSTEM, system);
    put(CPU_SOFTIRQ, softirq);
    put(CPU_IOWAIT, iowait);
    put(CPU_STEAL, hw.stealPct * Math.exp(0.4 * noise.gaussian()));
    put(LOAD_1M, hw.cores * (busy + 0.8 * blocked) * (1 + 0.05 * noise.gaussian()));
    put(LOAD_5M, hw.cores * (0.4 * busy + 0.6 * before1 + 0.7 * blocked) * (1 + 0.03 * noise.gaussian()));
    put(LOAD_15M, hw.cores * (0.3 * busy + 0.3 * before1 + 0.4 * before3 + 0.6 * blocked)
        * (1 + 0.02 * noise.gaussian()));
    put(CONTEXT_SWITCHES, req * 0.004 + connections * 0.0008 + 5 + 0.5 * noise.gaussian());
  }

  /** Memory follows demand and a daily sawtooth: the cache process restarts once a day at a host-specific hour. */
  private void memory(int host, long interval, Workload w, Hardware hw, long connections) {
    double age = Math.floorMod(interval - fleet.restartInterval[host], INTERVALS_PER_DAY) / (double) INTERVALS_PER_DAY;
    double used = clamp(w.memUsedPct + 5 * demand + 10 * (age - 0.5) + 0.6 * noise.gaussian(), 5, 99.5);
    double pageCache = hw.ramGib * w.pageCacheShare * (1 + 0.1 * demand) * (1.15 - 0.3 * age)
        * (1 + 0.01 * noise.gaussian());
    double swapBase = hw == Hardware.GEN_A ? 180 : 8;
    double warmUp = 40 * Math.exp(-age * INTERVALS_PER_DAY / 3.0); // cold page cache right after a restart
    put(MEM_USED, used);
    put(PAGE_CACHE, pageCache);
    put(MEM_AVAILABLE, hw.ramGib * (1 - used / 100) + 0.8 * pageCache * (1 + 0.02 * noise.gaussian()));
    put(SWAP_USED, swapBase * (0.3 + 1.4 * age) * Math.exp(0.5 * noise.gaussian()) + Math.max(0, used - 95) * 300);
    put(MAJOR_FAULTS, get(DISK_READ) * (1 - w.pageCacheShare) * 0.02 + warmUp + 0.5 * Math.abs(noise.gaussian()));
    put(OPEN_FILES, Math.rint(12000 + 1.05 * connections + 200 * noise.gaussian()));
  }

  private void http(Fault f) {
    double errors = f == null ? 1 : switch (f) {
      case SATURATED_DISK -> 25;
      case CACHE_DEGRADATION -> 6;
      case NETWORK_ERRORS -> 4;
      case FAILING_FAN -> 1.5;
    };
    double p50 = 3 + (1 - hit) * 70 + readLatency * 0.5 * (1 - ramHit) + 0.3 * Math.abs(noise.gaussian())
        + (f == Fault.NETWORK_ERRORS ? noise.uniform(30, 60) : 0);
    double p99 = p50 * 5.5 * Math.exp(0.05 * noise.gaussian()) + readLatency * 4 + get(RETRANSMIT) * 30;
    put(HTTP_4XX, req * 0.004 * Math.exp(0.2 * noise.gaussian()));
    put(HTTP_5XX, req * 0.0004 * Math.exp(0.3 * noise.gaussian()) * errors);
    put(TTFB_P50, p50);
    put(TTFB_P99, p99);
    put(WORKERS_BUSY, Math.rint(req * p50 / 1000 * (1 + 0.05 * noise.gaussian()) + 8));
  }

  private void thermal(int host, Hardware hw, Fault f) {
    Region r = fleet.region[host];
    boolean fanFault = f == Fault.FAILING_FAN;
    double inlet = r.ambientC + fleet.inletOffsetC[host] + 0.8 * Math.cos(2 * Math.PI * (rowHour - 15) / 24)
        + 1.5 * roomWander + 0.25 * noise.gaussian();
    double cpuTemp = inlet + hw.thermal * (14 + 40 * busy) + 0.8 * noise.gaussian()
        + (fanFault ? noise.uniform(11, 16) : 0);
    double target = hw.fanBaseRpm * (1 + 0.035 * Math.max(0, cpuTemp - 50));
    double rpmSum = 0;
    double fanWatts = 0;
    for (int k = 0; k < Fleet.FANS; k++) {
      double rpm = Math.min(MAX_FAN_RPM, target * (1 + fleet.fanTrim[host * Fleet.FANS + k])
          * (1 + 0.01 * noise.gaussian()));
      if (fanFault) {
        rpm = k == fleet.failingFan[host] ? noise.uniform(300, 1100) : Math.min(MAX_FAN_RPM, rpm * 1.2);
      }
      fans[k] = rpm;
      rpmSum += rpm;
      double s = rpm / 10000;
      fanWatts += 9 * s * s * s;
    }
    double power = hw.idleWatts + hw.dynamicWatts * busy + util * 0.35 + tx * 0.5 + fanWatts + 5 * noise.gaussian();
    double cfm = rpmSum * 0.0019;
    double psuLoad = power / (2 * hw.psuWatts);
    put(INLET_TEMP, inlet);
    put(CPU_TEMP, cpuTemp);
    put(FAN_1, fans[0]);
    put(FAN_2, fans[1]);
    put(FAN_3, fans[2]);
    put(FAN_4, fans[3]);
    put(POWER, power);
    put(EXHAUST_TEMP, inlet + 1.76 * power / cfm + 0.4 * noise.gaussian() + (fanFault ? noise.uniform(4, 7) : 0));
    put(NVME_TEMP, inlet + 12 + util * 0.16 + hw.nvmeOffsetC + 0.7 * noise.gaussian()
        + (fanFault ? noise.uniform(6, 10) : 0));
    put(DIMM_TEMP, inlet + 9 + 9 * demand + 0.5 * noise.gaussian() + (fanFault ? 4 : 0));
    put(NIC_TEMP, inlet + 16 + 22 * tx / hw.nicGbps + 0.6 * noise.gaussian() + (fanFault ? 3 : 0));
    put(PSU_EFFICIENCY, hw.psuPeakEfficiency - 14 * (psuLoad - 0.5) * (psuLoad - 0.5) + 0.15 * noise.gaussian());
    put(PSU_VOLTAGE, r.mainsVolts * (1 + 0.008 * noise.gaussian()));
    double throttle = Math.max(0, cpuTemp - 82) * 0.06;
    put(CPU_FREQ, Math.max(0.6 * hw.baseGhz,
        hw.baseGhz + 0.9 * hw.turboGhz * Math.sqrt(1 - busy) - throttle + 0.02 * noise.gaussian()));
    put(NTP_OFFSET, fleet.ntpBiasMs[host] + 0.3 * noise.gaussian());
  }

  private void dropouts() {
    missing[INLET_TEMP.ordinal()] = noise.chance(INLET_DROPOUT);
    missing[NVME_TEMP.ordinal()] = noise.chance(NVME_DROPOUT);
    missing[FAN_4.ordinal()] = noise.chance(FAN_DROPOUT);
    if (noise.chance(PSU_NAN)) {
      put(PSU_EFFICIENCY, Double.NaN);
    }
  }

  private void summarise() {
    factors[0] = (demand - 0.6) / 0.25;
    factors[1] = (busy - 0.3) / 0.15;
    factors[2] = (get(CPU_TEMP) - 60) / 8;
    factors[3] = (util - 45) / 20;
    factors[4] = (tx - 10) / 6;
    factors[5] = clamp((hit - 0.93) / 0.04, -8, 3);
  }

  /** CPU busy share expected at a demand, without noise or faults: the history behind the 5 and 15 minute loads. */
  private static double expectedBusy(Workload w, Hardware hw, double demand) {
    double tx = Math.min(w.txPeakGbps * hw.txScale * demand, hw.nicGbps * 0.97);
    double req = tx * 1e9 / 8 / (w.objectKib * 1024);
    double user = clamp(userPct(w, hw, tx, req), 0.5, 96);
    double kpps = tx * KPPS_PER_GBPS;
    return clamp((1.3 * user + kpps * 0.004 + kpps * 1.5 * 0.0025 * hw.cpuCost) / 100, 0, 1);
  }

  /** User CPU %: a cost per request plus a cost per bit (encryption and copying), scaled by the hardware. */
  private static double userPct(Workload w, Hardware hw, double tx, double req) {
    return hw.cpuCost * (req / 1000 * w.cpuPerKiloRequest + tx * 1.4) + 1.5;
  }

  /**
   * Smooth noise: standard normal knots every hour, keyed by (stream, who, hour), blended with a smoothstep. Costs
   * two draws; leaves the noise source reset, so call it before the row's own stream is started.
   */
  private double smooth(long stream, long who, long interval) {
    long k = Math.floorDiv(interval, INTERVALS_PER_HOUR);
    double t = (interval - k * INTERVALS_PER_HOUR) / (double) INTERVALS_PER_HOUR;
    double s = t * t * (3 - 2 * t);
    noise.reset(NoiseSource.key(seed, stream, who, k));
    double g0 = noise.gaussian();
    noise.reset(NoiseSource.key(seed, stream, who, k + 1));
    double g1 = noise.gaussian();
    return g0 + (g1 - g0) * s;
  }

  private double liveEvent(Region r, long hour) {
    noise.reset(NoiseSource.key(seed, LIVE_EVENT_STREAM, r.ordinal(), hour));
    return noise.chance(0.07) ? noise.uniform(1.3, 1.7) : 1;
  }

  private double releaseDay(long day) {
    noise.reset(NoiseSource.key(seed, RELEASE_STREAM, day, 0));
    return noise.chance(0.3) ? noise.uniform(1.2, 1.5) : 1;
  }

  private void put(Metric m, double v) {
    values[m.ordinal()] = v;
  }

  private double get(Metric m) {
    return values[m.ordinal()];
  }

  private static double clamp(double x, double lo, double hi) {
    return Math.max(lo, Math.min(hi, x));
  }
}
