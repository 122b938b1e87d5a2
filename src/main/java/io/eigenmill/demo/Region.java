package io.eigenmill.demo;

/**
 * The invented regions of the demo fleet. Each has its own UTC offset (which shifts the daily traffic cycle), mains
 * voltage, machine-room inlet temperature, share of the fleet and last-mile packet loss.
 */
enum Region {
  VALDORIA("valdoria", "vld", 60, 230.0, 21.5, 0.28, 0.12),
  KESSMARK("kessmark", "ksm", -300, 208.0, 22.5, 0.24, 0.09),
  ORINTH("orinth", "orn", 330, 230.0, 24.5, 0.18, 0.35),
  TAMSEL("tamsel", "tms", 540, 200.0, 20.5, 0.16, 0.07),
  BREVANE("brevane", "brv", -480, 208.0, 23.0, 0.14, 0.15);

  static final Region[] ALL = values();

  final String label;
  final String code;
  final int utcOffsetMinutes;
  final double mainsVolts;
  final double ambientC;
  final double share;
  /** Median TCP retransmit share (%) of healthy hosts of the region. */
  final double retransmitPct;

  Region(String label, String code, int utcOffsetMinutes, double mainsVolts, double ambientC, double share,
      double retransmitPct) {
    this.label = label;
    this.code = code;
    this.utcOffsetMinutes = utcOffsetMinutes;
    this.mainsVolts = mainsVolts;
    this.ambientC = ambientC;
    this.share = share;
    this.retransmitPct = retransmitPct;
  }
}
