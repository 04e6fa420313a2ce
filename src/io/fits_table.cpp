// FITS binary tables through CFITSIO.
#include "fulcrum/io/fits_table.hpp"

#include <fitsio.h>

#include <algorithm>
#include <memory>

#include "fulcrum/core/error.hpp"
#include "fulcrum/io/atomic_file.hpp"

namespace fulcrum {

std::size_t TableColumn::size() const {
  return std::visit([](const auto& v) { return v.size(); }, values);
}

namespace {
std::string errtext(int status) {
  char text[FLEN_STATUS] = {0};
  fits_get_errstatus(status, text);
  return text;
}
}  // namespace

void write_fits_table(const std::string& path, const std::string& extname,
                      const std::vector<TableColumn>& columns, const std::vector<HeaderCard>& extra) {
  const std::size_t nrows = columns.empty() ? 0 : columns.front().size();
  for (const auto& c : columns)
    FULCRUM_CHECK(c.size() == nrows, nrows, c.size());
  AtomicFile out(path);
  {
    fitsfile* f = nullptr;
    int status = 0;
    std::string bang = "!" + out.temporary_path();
    if (fits_create_file(&f, bang.c_str(), &status))
      throw InputError(path, "cannot create FITS file: " + errtext(status));
    std::vector<std::string> ttype, tform, tunit;
    for (const auto& c : columns) {
      ttype.push_back(c.name);
      tunit.push_back(c.unit);
      if (std::holds_alternative<std::vector<double>>(c.values)) {
        tform.push_back("1D");
      } else if (std::holds_alternative<std::vector<std::int64_t>>(c.values)) {
        tform.push_back("1K");
      } else {
        std::size_t w = 1;
        for (const auto& s : std::get<std::vector<std::string>>(c.values)) w = std::max(w, s.size());
        tform.push_back(std::to_string(w) + "A");
      }
    }
    std::vector<char*> pt, pf, pu;
    for (std::size_t i = 0; i < columns.size(); ++i) {
      pt.push_back(ttype[i].data());
      pf.push_back(tform[i].data());
      pu.push_back(tunit[i].data());
    }
    fits_create_tbl(f, BINARY_TBL, static_cast<LONGLONG>(nrows), static_cast<int>(columns.size()),
                    pt.data(), pf.data(), pu.data(), extname.c_str(), &status);
    for (std::size_t i = 0; i < columns.size() && !status; ++i) {
      const int col = static_cast<int>(i + 1);
      const auto& c = columns[i];
      if (!c.description.empty()) {
        std::string key = "TTYPE" + std::to_string(col);
        fits_modify_comment(f, key.c_str(), c.description.substr(0, 47).c_str(), &status);
      }
      if (nrows == 0) continue;
      if (auto* d = std::get_if<std::vector<double>>(&c.values)) {
        fits_write_col(f, TDOUBLE, col, 1, 1, static_cast<LONGLONG>(nrows),
                       const_cast<double*>(d->data()), &status);
      } else if (auto* k = std::get_if<std::vector<std::int64_t>>(&c.values)) {
        std::vector<LONGLONG> tmp(k->begin(), k->end());
        fits_write_col(f, TLONGLONG, col, 1, 1, static_cast<LONGLONG>(nrows), tmp.data(), &status);
      } else {
        const auto& s = std::get<std::vector<std::string>>(c.values);
        std::vector<std::string> copy(s);
        std::vector<char*> ptrs;
        for (auto& x : copy) ptrs.push_back(x.data());
        fits_write_col(f, TSTRING, col, 1, 1, static_cast<LONGLONG>(nrows), ptrs.data(), &status);
      }
    }
    for (const auto& c : extra) {
      if (status) break;
      if (c.numeric)
        fits_update_key_dbl(f, c.name.c_str(), std::stod(c.value), 15, c.comment.c_str(), &status);
      else
        fits_update_key_str(f, c.name.c_str(), const_cast<char*>(c.value.c_str()),
                            c.comment.c_str(), &status);
    }
    int s2 = 0;
    fits_close_file(f, &s2);
    if (status || s2) throw InputError(path, "cannot write FITS table: " + errtext(status ? status : s2));
  }
  out.commit();
}

}  // namespace fulcrum
