#pragma once
// Small helpers over netCDF-C++ for reading CF attributes (private to currents).
#include <netcdf>
#include <optional>
#include <string>
#include <vector>

namespace cullcast::currents::nc {

inline bool has_att(const netCDF::NcVar& var, const std::string& name) {
  const auto atts = var.getAtts();
  return atts.find(name) != atts.end();
}

inline std::optional<std::string> text_att(const netCDF::NcVar& var, const std::string& name) {
  if (!has_att(var, name)) return std::nullopt;
  netCDF::NcVarAtt att = var.getAtt(name);
  if (att.getType().getId() != NC_CHAR && att.getType().getId() != NC_STRING) return std::nullopt;
  std::string value;
  att.getValues(value);
  while (!value.empty() && (value.back() == '\0' || value.back() == ' ')) value.pop_back();
  while (!value.empty() && value.front() == ' ') value.erase(value.begin());
  return value;
}

inline std::optional<std::vector<double>> num_att(const netCDF::NcVar& var, const std::string& name) {
  if (!has_att(var, name)) return std::nullopt;
  netCDF::NcVarAtt att = var.getAtt(name);
  if (att.getType().getId() == NC_CHAR || att.getType().getId() == NC_STRING) return std::nullopt;
  std::vector<double> values(att.getAttLength());
  if (!values.empty()) att.getValues(values.data());
  return values;
}

inline std::string lower(std::string s) {
  for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}

}  // namespace cullcast::currents::nc

namespace cullcast::currents::nc {
// The library's message without the "file: ncFile.cpp line: N" suffix netCDF-C++ adds.
inline std::string why(const netCDF::exceptions::NcException& e) {
  std::string s = e.what();
  const auto p = s.find("\nfile:");
  if (p != std::string::npos) s.erase(p);
  while (!s.empty() && (s.back() == '\n' || s.back() == ' ')) s.pop_back();
  return s;
}
}  // namespace cullcast::currents::nc
