// Conversions between Python objects and the library's types for the Python
// module `fulcrum` (docs/python.md). Nothing here computes: maps in (a path,
// or an array with its header), JSON results and tables out, arrays out
// without a copy, errors as Python exceptions, progress to a callback, and
// the GIL released while the library works.
//
// Arrays: a map given in memory is a 2-D numpy array of shape (ny, nx)
// (row y, column x, the FITS layout: x fastest), or one with extra leading
// axes of length 1. Its values are copied once into the library's image
// (which owns its pixels); a C-contiguous native float64 array is copied
// as one block, any other (a strided view, float32, integers, big-endian
// data from a FITS reader) is converted by numpy first.
#pragma once

#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>

#include <memory>
#include <optional>
#include <type_traits>
#include <string>
#include <utility>
#include <vector>

#include <nlohmann/json.hpp>

#include "fulcrum/io/image.hpp"
#include "fulcrum/report/table.hpp"

namespace fulcrum::python {

namespace py = pybind11;

// A map: a path (str or os.PathLike) read as a FITS file, or a pair (array,
// header) with the header an astropy.io.fits.Header, a dict of cards
// ({"CTYPE1": "RA---SIN", "CDELT1": (-1e-4, "comment"), ...}), a string of
// 80-character cards, or None. `role` names an array in messages ("velocity"
// gives "velocity array"). Every problem is an InputError.
Image map_from_python(const py::handle& map, const std::string& role);
// The same, None giving nothing.
std::optional<Image> optional_map(const py::handle& map, const std::string& role);
// How the analysis names the map: its path, or "<role> array"; "" for None.
std::string map_name(const py::handle& map, const std::string& role);
// Whether `map` is a path (str or os.PathLike).
bool is_path(const py::handle& map);

// A header as 80-character cards (see map_from_python).
std::string header_cards(const py::handle& header, const std::string& name);

// JSON as Python: objects as dict, arrays as list, null as None; a NaN or
// infinite number as None, as report.json writes it.
py::object to_python(const nlohmann::json& j);

// A table as an astropy Table (units, descriptions, meta) when astropy
// imports, else a dict of column name -> list.
py::object table_to_python(const report::Table& table);

// A float64 array of `shape` (C order) that owns `values` (no copy).
py::array_t<double> owned_array(std::vector<double>&& values, std::vector<py::ssize_t> shape);
// An image's pixels as an array of shape (ny, nx), NaN where missing.
py::array_t<double> image_array(Image&& image);

// A number, a whole number, a word from a keyword argument; anything else is
// a SettingError naming `setting` ("must be a number").
double number_argument(const py::handle& value, const std::string& setting);
std::int64_t integer_argument(const py::handle& value, const std::string& setting);
std::string text_argument(const py::handle& value, const std::string& setting);

// Runs `work` with the GIL released; while it runs, every step of the
// library's progress lines calls `progress(label, done, total)` (a Python
// callable, or None), with the GIL held. An exception raised by the callback
// stops further calls and is raised once `work` has returned.
class ProgressToPython {
 public:
  explicit ProgressToPython(py::object callback);
  ~ProgressToPython();
  void rethrow_if_failed();

 private:
  struct State;
  std::shared_ptr<State> state_;
};

template <class Work>
auto run_released(const py::object& progress, Work&& work) {
  ProgressToPython listening(progress);
  if constexpr (std::is_void_v<decltype(work())>) {
    {
      py::gil_scoped_release release;
      work();
    }
    listening.rethrow_if_failed();
  } else {
    std::optional<decltype(work())> result;
    {
      py::gil_scoped_release release;
      result.emplace(work());
    }
    listening.rethrow_if_failed();
    return std::move(*result);
  }
}

}  // namespace fulcrum::python
