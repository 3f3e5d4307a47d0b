// Config -> PortAudio device source.
#include "rig_factory.h"
#include "tonewarden/source/device_source.h"

namespace tonewarden::daemon {

base::Result<std::unique_ptr<source::Source>> make_device_source(const config::RigConfig& rig) {
  const config::SourceConfig& s = rig.source;
  source::DeviceSourceConfig c;
  c.device = s.device;
  c.device_index = static_cast<int>(s.device_index);
  if (s.sample_rate_hz > 0) c.sample_rate_hz = s.sample_rate_hz;
  if (s.channels > 0) c.channels = static_cast<size_t>(s.channels);
  if (s.frames_per_buffer > 0) c.frames_per_buffer = static_cast<size_t>(s.frames_per_buffer);
  auto r = source::DeviceSource::create(c);
  if (!r) return std::move(r).error();
  return std::unique_ptr<source::Source>(std::move(r).value());
}

}  // namespace tonewarden::daemon
