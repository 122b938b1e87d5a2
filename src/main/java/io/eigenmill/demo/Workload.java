package io.eigenmill.demo;

/**
 * The latent workload types a host serves. Each fixes the shape of the daily demand curve (local time), the traffic
 * at full demand, the object sizes and how well they cache, and the connection behaviour.
 */
enum Workload {
  VIDEO_ON_DEMAND("video_on_demand", 0.35, 0.55, 0.38, 21.0, 0.07, 20.0, 1.10, 22.0, 1536.0, 1.9, 0.93, 0.45,
      12.0, 0.08, 84.0, 0.30, 512.0, 6.0),
  LIVE_STREAMING("live_streaming", 0.15, 0.50, 0.30, 20.0, 0.08, 13.0, 1.05, 18.0, 640.0, 2.1, 0.985, 0.88,
      30.0, 0.05, 70.0, 0.18, 256.0, 0.8),
  WEB_OBJECTS("web_objects", 0.30, 0.58, 0.30, 14.0, 0.10, 10.0, 0.85, 6.0, 28.0, 1.8, 0.88, 0.70,
      3.0, 0.25, 78.0, 0.35, 16.0, 140.0),
  SOFTWARE_DOWNLOADS("software_downloads", 0.20, 0.60, 0.22, 11.0, 0.05, 16.0, 0.75, 28.0, 24576.0, 1.5, 0.96,
      0.30, 60.0, 0.50, 88.0, 0.40, 1024.0, 0.4);

  static final Workload[] ALL = values();

  final String label;
  final double share;
  // demand(h) = base + a1 cos(2 pi (h - peak1) / 24) + a2 cos(4 pi (h - peak2) / 24), h in local hours
  final double base;
  final double a1;
  final double peak1;
  final double a2;
  final double peak2;
  /** Demand multiplier on Saturdays and Sundays (local). */
  final double weekend;
  /** Egress at demand 1 on the newest hardware. */
  final double txPeakGbps;
  final double objectKib;
  /** CPU % per thousand requests/s on the reference hardware. */
  final double cpuPerKiloRequest;
  final double hitRatio;
  /** Share of hits served from RAM rather than the store disks. */
  final double ramHitShare;
  final double keepaliveSeconds;
  /** Share of requests that open a new TLS session. */
  final double newSessionShare;
  final double memUsedPct;
  final double pageCacheShare;
  /** Typical disk read size, KiB. */
  final double ioKib;
  /** Objects held in the store on the reference hardware, millions. */
  final double objectsMillions;

  Workload(String label, double share, double base, double a1, double peak1, double a2, double peak2,
      double weekend, double txPeakGbps, double objectKib, double cpuPerKiloRequest, double hitRatio,
      double ramHitShare, double keepaliveSeconds, double newSessionShare, double memUsedPct, double pageCacheShare,
      double ioKib, double objectsMillions) {
    this.label = label;
    this.share = share;
    this.base = base;
    this.a1 = a1;
    this.peak1 = peak1;
    this.a2 = a2;
    this.peak2 = peak2;
    this.weekend = weekend;
    this.txPeakGbps = txPeakGbps;
    this.objectKib = objectKib;
    this.cpuPerKiloRequest = cpuPerKiloRequest;
    this.hitRatio = hitRatio;
    this.ramHitShare = ramHitShare;
    this.keepaliveSeconds = keepaliveSeconds;
    this.newSessionShare = newSessionShare;
    this.memUsedPct = memUsedPct;
    this.pageCacheShare = pageCacheShare;
    this.ioKib = ioKib;
    this.objectsMillions = objectsMillions;
  }

  /** The demand curve at local hour {@code h} (fractional), before weekend, events and host effects. */
  double dailyShape(double h) {
    double w = 2 * Math.PI / 24;
    return base + a1 * Math.cos(w * (h - peak1)) + a2 * Math.cos(2 * w * (h - peak2));
  }
}
