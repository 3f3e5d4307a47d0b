// JSON encodings of the provider data types; one place, so the API, the event stream and the
// OpenAPI schemas agree. Times are RFC 3339 UTC strings; NaN values become null.
#pragma once

#include <nlohmann/json.hpp>

#include "tonewarden/http/providers.h"

namespace tonewarden::http::detail {

using Json = nlohmann::json;

// Compact text; invalid UTF-8 in provider strings is replaced, never thrown.
std::string dump(const Json& j);

Json time_json(WallTimeMs t);           // null for unix_ms 0 ("never")
Json number_json(double v);             // null for NaN or infinity
Json to_json(const SourceStatus& s);
Json to_json(const StatusInfo& s);
Json to_json(const ConfigView& c);
Json to_json(const Reading& r);
Json to_json(const TrendSeries& s);
Json to_json(const AlarmState& a);
Json to_json(const AlarmEvent& e);
Json to_json(const SnapshotInfo& s);
Json to_json(const Annotation& a);
Json to_json(const SpectrumPeak& p);
Json to_json(const TargetMarker& m);
Json to_json(const ThresholdLine& t);

}  // namespace tonewarden::http::detail
