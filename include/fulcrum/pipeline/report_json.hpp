// report.json of one galaxy, written from its typed GalaxySummary at the
// edge, once (docs/report.md and docs/report.schema.json describe every
// key; schema_version 2).
//
// Determinism: sorted keys (nlohmann::json objects), shortest round-trip
// numbers, NaN and infinities written as null; the one timestamp is
// created_utc (SOURCE_DATE_EPOCH when set).
#pragma once

#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/pipeline/galaxy_analysis.hpp"
#include "fulcrum/pipeline/galaxy_summary.hpp"

namespace fulcrum::pipeline {

inline constexpr int kReportSchemaVersion = 2;

// The content of report.json.
nlohmann::json to_json(const GalaxySummary& summary);

// {"velocity": {"path", "sha256"}, ...} for every input file that exists.
nlohmann::json input_provenance(const GalaxyInput& input);
// The same for maps held in memory: each map's path (as `input` names it)
// with the SHA-256 of its file when that path is a file, else of its pixel
// values (float64, little-endian, x fastest, NaN for missing pixels).
nlohmann::json maps_provenance(const GalaxyInput& input, const GalaxyMaps& maps);

// The single timestamp field (ISO 8601 UTC), honouring SOURCE_DATE_EPOCH.
std::string created_utc();

// The JSON dump used for every report file: 2-space indent, sorted keys,
// NaN/inf written as null, trailing newline.
std::string dump_json(const nlohmann::json& j);

}  // namespace fulcrum::pipeline
