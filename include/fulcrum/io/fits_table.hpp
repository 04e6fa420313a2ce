// Writing FITS binary tables (CFITSIO) with units and descriptions.
//
// A table is a list of columns of equal length; each column has a name, a
// unit (TUNITn, may be empty), a description (written as the TTYPEn comment)
// and either float64, int64 or string values. The file is written atomically
// (temporary name, then rename).
#pragma once

#include <cstdint>
#include <string>
#include <variant>
#include <vector>

#include "fulcrum/io/fits_image.hpp"

namespace fulcrum {

struct TableColumn {
  std::string name;
  std::string unit;
  std::string description;
  std::variant<std::vector<double>, std::vector<std::int64_t>, std::vector<std::string>> values;
  std::size_t size() const;
};

// Write `columns` as a binary-table extension named `extname` after an empty
// primary HDU. `extra` cards go into the table header.
void write_fits_table(const std::string& path, const std::string& extname,
                      const std::vector<TableColumn>& columns,
                      const std::vector<HeaderCard>& extra = {});

}  // namespace fulcrum
