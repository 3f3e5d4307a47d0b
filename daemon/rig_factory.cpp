// Config -> source, pipeline and monitor for one rig.
#include "rig_factory.h"

#include <algorithm>
#include <cmath>

#include "tonewarden/base/units.h"
#include "tonewarden/source/file_source.h"
#include "tonewarden/source/pcm_stream_source.h"
#include "tonewarden/source/synthetic_rig.h"

namespace tonewarden::daemon {
namespace {

using base::ErrorCode;
using base::make_error;

source::Pace to_pace(config::Pace p) {
  return p == config::Pace::kFast ? source::Pace::kFast : source::Pace::kRealTime;
}

dsp::WindowSpec to_window(const config::AnalysisConfig& a) {
  switch (a.window) {
    case config::WindowKind::kHann: return {dsp::WindowKind::kHann, 0};
    case config::WindowKind::kHamming: return {dsp::WindowKind::kHamming, 0};
    case config::WindowKind::kBlackmanHarris: return {dsp::WindowKind::kBlackmanHarris, 0};
    case config::WindowKind::kFlatTop: return {dsp::WindowKind::kFlatTop, 0};
    case config::WindowKind::kRectangular: return {dsp::WindowKind::kRectangular, 0};
    case config::WindowKind::kBlackman: return {dsp::WindowKind::kBlackman, 0};
    case config::WindowKind::kHft95: return {dsp::WindowKind::kHft95, 0};
    case config::WindowKind::kKaiser: return {dsp::WindowKind::kKaiser, a.kaiser_beta};
  }
  return {};
}

dsp::AverageConfig to_average(const config::AnalysisConfig& a) {
  dsp::AverageConfig c;
  switch (a.average_mode) {
    case config::AverageMode::kNone:
      c.mode = dsp::AverageMode::kLinear;
      c.linear_frames = 1;
      break;
    case config::AverageMode::kLinear:
      c.mode = dsp::AverageMode::kLinear;
      c.linear_frames = static_cast<size_t>(std::max<int64_t>(1, a.average_count));
      break;
    case config::AverageMode::kExponential:
      c.mode = dsp::AverageMode::kExponential;
      c.time_constant_s = a.average_time_constant_s;
      break;
    case config::AverageMode::kPeakHold:
      c.mode = dsp::AverageMode::kPeakHold;
      break;
  }
  return c;
}

track::TargetConfig to_target(const config::TargetConfig& t) {
  track::TargetConfig out;
  out.name = t.name;
  switch (t.kind) {
    case config::TargetKind::kFixed: out.kind = track::TargetKind::kFixedHz; break;
    case config::TargetKind::kOrder: out.kind = track::TargetKind::kOrder; break;
    case config::TargetKind::kBearing: out.kind = track::TargetKind::kBearing; break;
    case config::TargetKind::kMesh: out.kind = track::TargetKind::kMesh; break;
    case config::TargetKind::kHum: out.kind = track::TargetKind::kHum; break;
  }
  out.frequency_hz = t.frequency_hz;
  out.order = t.order > 0 ? t.order : 1.0;
  out.teeth = static_cast<int>(t.teeth);
  out.mains_hz = t.mains_hz > 0 ? t.mains_hz : 50.0;
  out.hum_multiple = t.mains_multiple >= 2 ? 2 : 1;
  out.bearing.num_elements = static_cast<int>(t.balls);
  out.bearing.element_diameter = t.ball_diameter_mm;
  out.bearing.pitch_diameter = t.pitch_diameter_mm;
  out.bearing.contact_angle_deg = t.contact_angle_deg;
  switch (t.defect) {
    case config::BearingDefect::kBpfo: out.bearing_tone = track::BearingTone::kBpfo; break;
    case config::BearingDefect::kBpfi: out.bearing_tone = track::BearingTone::kBpfi; break;
    case config::BearingDefect::kBsf: out.bearing_tone = track::BearingTone::kBsf; break;
    case config::BearingDefect::kTwoBsf: out.bearing_tone = track::BearingTone::kTwoBsf; break;
    case config::BearingDefect::kFtf: out.bearing_tone = track::BearingTone::kFtf; break;
  }
  out.tolerance_hz = t.tolerance_hz.value_or(0.0);
  out.tolerance_percent = t.tolerance_pct.value_or(t.tolerance_hz ? 0.0 : 2.0);
  out.spectrum = t.spectrum == config::TargetSpectrum::kEnvelope ? track::SearchSpectrum::kEnvelope
                                                                  : track::SearchSpectrum::kPlain;
  out.harmonics = static_cast<int>(std::max<int64_t>(1, t.harmonics));
  out.sidebands = t.sidebands > 0;
  return out;
}

alarm::RuleConfig to_rule(const config::RuleConfig& r) {
  alarm::RuleConfig out;
  out.name = r.name;
  out.reading = r.reading;
  out.direction = r.direction == config::Direction::kBelow ? alarm::Direction::kBelow
                                                           : alarm::Direction::kAbove;
  out.warning = r.warning;
  out.critical = r.critical;
  // Hysteresis is configured in percent of the lowest level in force.
  const double base_level = r.warning ? *r.warning : (r.critical ? *r.critical : 0.0);
  out.hysteresis = std::fabs(base_level) * r.hysteresis_pct / 100.0;
  out.on_delay_s = r.on_delay_s;
  out.off_delay_s = r.off_delay_s;
  out.latching = r.latch;
  switch (r.threshold_mode) {
    case config::ThresholdMode::kAbsolute: out.mode = alarm::ThresholdMode::kAbsolute; break;
    case config::ThresholdMode::kBaselineDb: out.mode = alarm::ThresholdMode::kBaselineDb; break;
    case config::ThresholdMode::kBaselineSpread:
      out.mode = alarm::ThresholdMode::kBaselineSpread;
      break;
  }
  if (r.baseline_learn_s > 0) out.learn_s = r.baseline_learn_s;
  return out;
}

}  // namespace

bool is_acceleration_unit(const std::string& unit) {
  return base::parse_accel_unit(unit).has_value();
}

base::Result<std::unique_ptr<source::Source>> make_source(const config::RigConfig& rig,
                                                          const std::string& data_dir) {
  const config::SourceConfig& s = rig.source;
  switch (s.kind) {
    case config::SourceKind::kSynthetic: {
      source::SyntheticRigConfig c;
      if (s.sample_rate_hz > 0) c.sample_rate_hz = s.sample_rate_hz;
      c.tach_channel = s.tach;
      c.pace = to_pace(s.pace);
      c.story_speed = s.story_speed;
      c.story_start_s = s.story_start_s;
      c.seed = s.seed;
      if (s.defect_onset_s > 0) c.defect_onset_s = s.defect_onset_s;
      auto r = source::SyntheticRig::create(c);
      if (!r) return std::move(r).error();
      return std::unique_ptr<source::Source>(std::move(r).value());
    }
    case config::SourceKind::kFile: {
      source::FileSourceConfig c;
      c.path = s.watch_dir.empty() ? s.path : "";
      c.watch_dir = s.watch_dir;
      if (!s.pattern.empty()) c.pattern = s.pattern;
      c.record_path = data_dir + "/" + rig.name + "-finished-files.txt";
      c.sample_rate_hz = s.sample_rate_hz;
      c.channels = static_cast<size_t>(std::max<int64_t>(0, s.channels));
      c.loop = s.loop;
      c.pace = to_pace(s.pace);
      auto r = source::FileSource::create(c);
      if (!r) return std::move(r).error();
      return std::unique_ptr<source::Source>(std::move(r).value());
    }
    case config::SourceKind::kPcm: {
      source::PcmStreamConfig c;
      c.path = s.path.empty() ? "-" : s.path;
      c.format = s.sample_format == config::SampleFormat::kS16   ? source::PcmFormat::kS16Le
                 : s.sample_format == config::SampleFormat::kS32 ? source::PcmFormat::kS32Le
                                                                 : source::PcmFormat::kF32Le;
      c.sample_rate_hz = s.sample_rate_hz;
      c.channels = static_cast<size_t>(std::max<int64_t>(1, s.channels));
      c.pace = to_pace(s.pace);
      auto r = source::PcmStreamSource::create(c);
      if (!r) return std::move(r).error();
      return std::unique_ptr<source::Source>(std::move(r).value());
    }
    case config::SourceKind::kDevice:
      return make_device_source(rig);
  }
  return make_error(ErrorCode::kInvalidArgument, "unknown source kind");
}

namespace {

// The rig's raw-evidence recorder over every channel, tach included.
base::Result<std::unique_ptr<pipeline::EvidenceRecorder>> make_evidence_recorder(
    const std::string& rig, double sample_rate_hz, const std::vector<pipeline::ChannelSpec>& channels,
    const RigBuildOptions& options) {
  pipeline::EvidenceRecorderConfig ec;
  ec.data_dir = options.data_dir;
  ec.rig = rig;
  ec.sample_rate_hz = sample_rate_hz;
  ec.channels = channels;
  ec.pre_s = options.evidence.pre_s;
  ec.post_s = options.evidence.post_s;
  ec.min_interval_s = options.evidence.min_interval_s;
  ec.max_total_bytes = static_cast<uint64_t>(options.evidence.max_total_mb * 1e6);
  auto r = pipeline::EvidenceRecorder::create(ec);
  if (!r) return std::move(r).error().with_context("rig '" + rig + "' evidence");
  return r;
}

}  // namespace

base::Result<Rig> build_rig(const config::RigConfig& rc, const RigBuildOptions& options) {
  auto src = make_source(rc, options.data_dir);
  if (!src) return std::move(src).error().with_context("rig '" + rc.name + "' source");
  const source::SourceCapabilities caps = (*src)->capabilities();

  pipeline::RigPipelineConfig pc;
  pc.rig = rc.name;
  for (const config::ChannelConfig& ch : rc.channels) {
    pipeline::ChannelSpec spec;
    spec.name = ch.name;
    spec.source_index = static_cast<size_t>(ch.index);
    spec.sensitivity_v_per_unit = ch.sensitivity_v_per_unit;
    spec.unit = ch.unit;
    spec.full_scale_v = ch.full_scale_v;
    spec.is_tach = ch.role == config::ChannelRole::kTach;
    pc.channels.push_back(spec);
  }
  const config::AnalysisConfig& a = rc.analysis;
  pc.chain.spectrum.sample_rate_hz = caps.sample_rate_hz;
  pc.chain.spectrum.block = static_cast<size_t>(a.block_samples);
  pc.chain.spectrum.pad_factor = static_cast<size_t>(a.pad_factor);
  pc.chain.spectrum.window = to_window(a);
  pc.chain.spectrum.planning = options.planning;
  pc.chain.hop = std::max<size_t>(
      1, static_cast<size_t>(std::llround(static_cast<double>(a.block_samples) * (1.0 - a.overlap_pct / 100.0))));
  pc.chain.average = to_average(a);
  pc.chain.peaks.max_peaks = static_cast<size_t>(std::max<int64_t>(1, a.peaks));
  if (a.peak_min_snr_db > 0) pc.chain.peaks.min_prominence_db = a.peak_min_snr_db;
  pc.chain.peaks.min_frequency_hz = 2.0;
  if (a.envelope_high_hz > a.envelope_low_hz) {
    pc.chain.envelope_band_hz = std::make_pair(a.envelope_low_hz, a.envelope_high_hz);
  }
  auto pipe = pipeline::RigPipeline::create(pc, std::move(src).value());
  if (!pipe) return std::move(pipe).error();
  Rig rig;
  rig.name = rc.name;
  if (options.evidence.enabled) {
    auto evidence = make_evidence_recorder(rc.name, caps.sample_rate_hz, pc.channels, options);
    if (!evidence) return std::move(evidence).error();
    rig.evidence = std::move(evidence).value();
  }
  auto mon = build_monitor(rc, **pipe, options, rig.evidence.get());
  if (!mon) return std::move(mon).error();
  (*pipe)->add_observer(mon->get());
  rig.pipeline = std::move(pipe).value();
  rig.monitor = std::move(mon).value();
  return rig;
}

base::Result<std::unique_ptr<pipeline::RigMonitor>> build_monitor(
    const config::RigConfig& rc, const pipeline::RigPipeline& p, const RigBuildOptions& options,
    pipeline::EvidenceRecorder* evidence) {
  const source::SourceCapabilities caps = p.capabilities();
  const pipeline::RigPipelineConfig& pc = p.config();
  const config::AnalysisConfig& a = rc.analysis;
  pipeline::RigMonitorConfig mc;
  mc.rig = rc.name;
  mc.channels = pc.channels;
  mc.snapshot_interval_s = options.snapshot_interval_s;
  const config::SpeedConfig& sp = rc.speed;
  mc.min_rpm = sp.min_rpm;
  mc.max_rpm = sp.max_rpm;
  switch (sp.source) {
    case config::SpeedSource::kFixed:
      mc.speed_mode = pipeline::SpeedMode::kFixed;
      mc.fixed_rpm = sp.rpm;
      break;
    case config::SpeedSource::kTach: {
      mc.speed_mode = pipeline::SpeedMode::kTach;
      for (size_t i = 0; i < rc.channels.size(); ++i) {
        if (rc.channels[i].name == sp.tach_channel) mc.tach_channel = i;
      }
      mc.tach.threshold = sp.trigger_level_v;
      mc.tach.hysteresis = sp.hysteresis_v;
      mc.tach.pulses_per_rev = static_cast<int>(sp.pulses_per_rev);
      if (sp.min_rpm > 0) mc.tach.min_rpm = sp.min_rpm;
      if (sp.max_rpm > sp.min_rpm) mc.tach.max_rpm = sp.max_rpm * 2.0;
      break;
    }
    case config::SpeedSource::kSpectrum:
      mc.speed_mode = pipeline::SpeedMode::kSpectrum;
      if (sp.min_rpm > 0) mc.spectral.min_rpm = sp.min_rpm;
      if (sp.max_rpm > sp.min_rpm) mc.spectral.max_rpm = sp.max_rpm;
      break;
  }

  for (size_t i = 0; i < rc.channels.size(); ++i) {
    const config::ChannelConfig& ch = rc.channels[i];
    if (ch.role == config::ChannelRole::kTach) continue;
    track::ChannelTrackConfig tc;
    tc.channel = ch.name;
    tc.unit = ch.unit;
    tc.spectrum.sample_rate_hz = caps.sample_rate_hz;
    tc.spectrum.block = pc.chain.spectrum.block;
    tc.spectrum.window = pc.chain.spectrum.window;
    const pipeline::ChannelChain* chain = p.chain(i);
    tc.spectrum.fft_length = chain->analyzer().fft_length();
    tc.has_envelope = chain->envelope() != nullptr;
    tc.envelope = tc.spectrum;
    if (tc.has_envelope) tc.envelope.fft_length = chain->envelope()->fft_length();
    tc.velocity = is_acceleration_unit(ch.unit);
    if (a.velocity_high_hz > a.velocity_low_hz) {
      tc.velocity_low_hz = a.velocity_low_hz;
      tc.velocity_high_hz = a.velocity_high_hz;
    }
    for (const config::TargetConfig& t : rc.targets) {
      if (t.channel.empty() || t.channel == ch.name) tc.targets.push_back(to_target(t));
    }
    mc.trackers.push_back(std::move(tc));
  }
  for (const config::RuleConfig& r : rc.rules) mc.rules.push_back(to_rule(r));

  auto mon = pipeline::RigMonitor::create(mc, p, options.store, options.sink, evidence);
  if (!mon) return std::move(mon).error().with_context("rig '" + rc.name + "'");
  return mon;
}

}  // namespace tonewarden::daemon
