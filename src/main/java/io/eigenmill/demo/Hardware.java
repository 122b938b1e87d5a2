package io.eigenmill.demo;

/**
 * The latent hardware generations of the fleet: older machines have fewer cores, slower disks and NICs, spend more
 * CPU per request, idle hotter and draw more power per unit of work. Not a column of the table.
 */
enum Hardware {
  GEN_A(0.25, 24, 128, 1.40, 190.0, 230.0, 20.0, 2200.0, 0.90, 6200.0, 1.15, 2.3, 0.8, 0.5, 550.0, 90.5, 0.8, 4.0),
  GEN_B(0.40, 48, 256, 1.10, 250.0, 320.0, 50.0, 6500.0, 0.25, 7200.0, 1.00, 2.6, 0.9, 0.8, 800.0, 92.5, 0.3, 2.0),
  GEN_C(0.35, 64, 512, 0.85, 300.0, 380.0, 100.0, 12000.0, 0.12, 8000.0, 0.90, 2.9, 0.8, 1.0, 1000.0, 94.0, 0.15,
      0.0);

  static final Hardware[] ALL = values();

  final double share;
  final int cores;
  final double ramGib;
  /** CPU cost multiplier against the reference machine. */
  final double cpuCost;
  final double idleWatts;
  final double dynamicWatts;
  final double nicGbps;
  final double diskMbPerS;
  final double diskLatencyMs;
  final double fanBaseRpm;
  /** Degrees per unit of CPU heat against the reference machine. */
  final double thermal;
  final double baseGhz;
  final double turboGhz;
  /** Share of the workload's peak egress this machine carries. */
  final double txScale;
  /** Rating of each of the two redundant power supplies. */
  final double psuWatts;
  final double psuPeakEfficiency;
  final double stealPct;
  final double nvmeOffsetC;

  Hardware(double share, int cores, double ramGib, double cpuCost, double idleWatts, double dynamicWatts,
      double nicGbps, double diskMbPerS, double diskLatencyMs, double fanBaseRpm, double thermal, double baseGhz,
      double turboGhz, double txScale, double psuWatts, double psuPeakEfficiency, double stealPct,
      double nvmeOffsetC) {
    this.share = share;
    this.cores = cores;
    this.ramGib = ramGib;
    this.cpuCost = cpuCost;
    this.idleWatts = idleWatts;
    this.dynamicWatts = dynamicWatts;
    this.nicGbps = nicGbps;
    this.diskMbPerS = diskMbPerS;
    this.diskLatencyMs = diskLatencyMs;
    this.fanBaseRpm = fanBaseRpm;
    this.thermal = thermal;
    this.baseGhz = baseGhz;
    this.turboGhz = turboGhz;
    this.txScale = txScale;
    this.psuWatts = psuWatts;
    this.psuPeakEfficiency = psuPeakEfficiency;
    this.stealPct = stealPct;
    this.nvmeOffsetC = nvmeOffsetC;
  }
}
