// Conversions between Python objects and the library's types
// (src/python/convert.hpp).
#include "convert.hpp"

#include <pybind11/stl.h>

#include <cmath>
#include <cstring>
#include <mutex>

#include "fulcrum/core/error.hpp"
#include "fulcrum/core/progress_listener.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/io/fits_image.hpp"
#include "fulcrum/io/header_card.hpp"
#include "fulcrum/io/image_from_memory.hpp"

namespace fulcrum::python {

namespace {

std::string type_name(const py::handle& h) { return py::str(py::type::handle_of(h).attr("__name__")); }

std::string python_repr(const py::handle& h) { return py::repr(h); }

// float(h) (its __float__); a Python error is raised as is.
double as_double(const py::handle& h) {
  const double v = PyFloat_AsDouble(h.ptr());
  if (v == -1.0 && PyErr_Occurred()) throw py::error_already_set();
  return v;
}

// One card of a dict header: bool as T/F, numbers as numbers, text quoted.
std::string dict_card(const std::string& key, const py::handle& given, const std::string& name) {
  py::handle value = given;
  std::string comment;
  if (py::isinstance<py::tuple>(given) && py::len(given) == 2) {
    auto pair = py::reinterpret_borrow<py::tuple>(given);
    value = pair[0];
    comment = py::str(pair[1]);
  }
  if (key.size() > 8)
    throw InputError(name, "header keyword '" + key + "' is longer than the 8 characters of a FITS keyword");
  if (py::isinstance<py::bool_>(value)) return header_card(key, value.cast<bool>() ? "T" : "F", false, comment);
  if (py::isinstance<py::int_>(value)) return header_card(key, std::string(py::str(value)), false, comment);
  if (py::isinstance<py::float_>(value)) return header_card(key, header_number(value.cast<double>()), false, comment);
  if (py::isinstance<py::str>(value)) return header_card(key, value.cast<std::string>(), true, comment);
  // numpy scalars and anything else that is a real number
  if (py::hasattr(value, "__float__") && !py::isinstance<py::str>(value))
    return header_card(key, header_number(as_double(value)), false, comment);
  throw InputError(name, "header card " + key + ": a value of type " + type_name(value) +
                             " is not a FITS value (a number, text or True/False)");
}

// The array of a (array, header) pair as FITS-ordered doubles and axes.
std::pair<std::vector<double>, std::vector<long>> pixels_of(const py::handle& given, const std::string& name) {
  py::array array = py::array::ensure(given);
  if (!array) throw InputError(name, "is a " + type_name(given) + ", not an array of pixel values");
  const char kind = array.dtype().kind();
  if (kind != 'f' && kind != 'i' && kind != 'u')
    throw InputError(name, "holds values of type " + std::string(py::str(array.dtype())) +
                               ": expected real numbers (a float or integer array)");
  std::vector<long> axes;
  for (py::ssize_t k = array.ndim(); k-- > 0;) axes.push_back(static_cast<long>(array.shape(k)));
  // A native float64 C-contiguous array is copied as one block; anything
  // else (strided views, other types, other byte orders) is made so first.
  if (!(py::array_t<double>::check_(array) && (array.flags() & py::array::c_style)))
    array = py::array_t<double, py::array::c_style | py::array::forcecast>::ensure(array);
  if (!array) throw py::error_already_set();
  std::vector<double> pixels(static_cast<std::size_t>(array.size()));
  if (!pixels.empty()) std::memcpy(pixels.data(), array.data(), pixels.size() * sizeof(double));
  return {std::move(pixels), std::move(axes)};
}

}  // namespace

bool is_path(const py::handle& map) {
  return py::isinstance<py::str>(map) || py::hasattr(map, "__fspath__");
}

std::string map_name(const py::handle& map, const std::string& role) {
  if (map.is_none()) return "";
  if (is_path(map)) return py::str(py::module_::import("os").attr("fspath")(map));
  return role + " array";
}

std::string header_cards(const py::handle& header, const std::string& name) {
  if (header.is_none()) return "";
  if (py::isinstance<py::str>(header)) return header.cast<std::string>();
  if (py::hasattr(header, "tostring") && py::hasattr(header, "cards"))  // astropy.io.fits.Header
    return header.attr("tostring")().cast<std::string>();
  if (py::isinstance<py::dict>(header)) {
    std::string cards;
    for (auto item : py::reinterpret_borrow<py::dict>(header)) {
      if (!py::isinstance<py::str>(item.first))
        throw InputError(name, "header keys must be text (keywords), got " + python_repr(item.first));
      cards += dict_card(item.first.cast<std::string>(), item.second, name);
    }
    return cards;
  }
  throw InputError(name, "the header is a " + type_name(header) +
                             ": expected an astropy.io.fits.Header, a dict of cards, a string of cards or None");
}

Image map_from_python(const py::handle& map, const std::string& role) {
  if (is_path(map)) {
    const std::string path = map_name(map, role);
    py::gil_scoped_release release;
    return read_image(path);
  }
  const std::string name = role + " array";
  if (!(py::isinstance<py::tuple>(map) || py::isinstance<py::list>(map)) || py::len(map) != 2)
    throw InputError("", role + ": expected a FITS file path or a pair (array, header), got a " + type_name(map));
  auto pair = py::reinterpret_borrow<py::sequence>(map);
  auto [pixels, axes] = pixels_of(pair[0], name);
  const std::string cards = header_cards(pair[1], name);
  py::gil_scoped_release release;
  return image_from_memory(std::move(pixels), axes, cards, name);
}

std::optional<Image> optional_map(const py::handle& map, const std::string& role) {
  if (map.is_none()) return std::nullopt;
  return map_from_python(map, role);
}

py::object to_python(const nlohmann::json& j) {
  using T = nlohmann::json::value_t;
  switch (j.type()) {
    case T::null: return py::none();
    case T::boolean: return py::bool_(j.get<bool>());
    case T::number_integer: return py::int_(j.get<std::int64_t>());
    case T::number_unsigned: return py::int_(j.get<std::uint64_t>());
    case T::number_float: {  // NaN and infinities as report.json writes them: null
      const double v = j.get<double>();
      return std::isfinite(v) ? py::object(py::float_(v)) : py::object(py::none());
    }
    case T::string: return py::str(j.get_ref<const std::string&>());
    case T::array: {
      py::list out;
      for (const auto& v : j) out.append(to_python(v));
      return out;
    }
    case T::object: {
      py::dict out;
      for (auto it = j.begin(); it != j.end(); ++it) out[py::str(it.key())] = to_python(it.value());
      return out;
    }
    default: return py::none();
  }
}

py::object table_to_python(const report::Table& t) {
  py::dict columns;
  for (const auto& c : t.columns) {
    py::object values;
    if (const auto* f = std::get_if<std::vector<double>>(&c.values)) values = owned_array(std::vector<double>(*f), {static_cast<py::ssize_t>(f->size())});
    else if (const auto* i = std::get_if<std::vector<std::int64_t>>(&c.values)) values = py::array_t<std::int64_t>(static_cast<py::ssize_t>(i->size()), i->data());
    else values = py::cast(std::get<std::vector<std::string>>(c.values));
    columns[py::str(c.name)] = values;
  }
  py::module_ table_module, units;
  try {
    table_module = py::module_::import("astropy.table");
    units = py::module_::import("astropy.units");
  } catch (const py::error_already_set&) {
    return columns;  // no astropy: plain columns
  }
  py::object table = table_module.attr("Table")();
  for (const auto& c : t.columns) {
    py::object unit = c.unit.empty() ? py::none() : units.attr("Unit")(c.unit, py::arg("parse_strict") = "silent");
    table.attr("add_column")(table_module.attr("Column")(columns[py::str(c.name)], py::arg("name") = c.name,
                                                         py::arg("unit") = unit,
                                                         py::arg("description") = c.description));
  }
  py::dict meta = table.attr("meta");
  meta["name"] = t.name;
  if (!t.caption.empty()) meta["caption"] = t.caption;
  for (const auto& [key, value] : t.meta) meta[py::str(key)] = value;
  return table;
}

py::array_t<double> owned_array(std::vector<double>&& values, std::vector<py::ssize_t> shape) {
  auto* held = new std::vector<double>(std::move(values));
  py::capsule owner(held, [](void* p) { delete static_cast<std::vector<double>*>(p); });
  return py::array_t<double>(shape, held->data(), owner);
}

py::array_t<double> image_array(Image&& image) {
  const py::ssize_t ny = image.ny, nx = image.nx;
  return owned_array(std::move(image.data), {ny, nx});
}

double number_argument(const py::handle& value, const std::string& setting) {
  if (py::isinstance<py::bool_>(value) || py::isinstance<py::str>(value) || !py::hasattr(value, "__float__"))
    throw SettingError(setting, python_repr(value), "a number");
  return as_double(value);
}

std::int64_t integer_argument(const py::handle& value, const std::string& setting) {
  if (py::isinstance<py::bool_>(value) || !py::hasattr(value, "__index__"))
    throw SettingError(setting, python_repr(value), "a whole number");
  int overflow = 0;
  const long long v = PyLong_AsLongLongAndOverflow(py::reinterpret_steal<py::object>(PyNumber_Index(value.ptr())).ptr(), &overflow);
  if (overflow) throw SettingError(setting, python_repr(value), "a whole number that fits in 64 bits");
  if (v == -1 && PyErr_Occurred()) throw py::error_already_set();
  return v;
}

std::string text_argument(const py::handle& value, const std::string& setting) {
  if (!py::isinstance<py::str>(value)) throw SettingError(setting, python_repr(value), "text");
  return value.cast<std::string>();
}

struct ProgressToPython::State {
  py::object callback;
  std::mutex mutex;
  std::exception_ptr failure;
  ProgressListener previous;
};

ProgressToPython::ProgressToPython(py::object callback) : state_(std::make_shared<State>()) {
  if (callback.is_none()) return;
  if (!PyCallable_Check(callback.ptr()))
    throw SettingError("progress", python_repr(callback), "a callable taking (label, done, total), or None");
  state_->callback = std::move(callback);
  std::weak_ptr<State> weak = state_;
  state_->previous = set_progress_listener([weak](const std::string& label, std::size_t done, std::size_t total) {
    auto s = weak.lock();
    if (!s) return;
    std::lock_guard<std::mutex> lock(s->mutex);
    if (s->failure) return;
    py::gil_scoped_acquire gil;
    try {
      s->callback(label, done, total);
    } catch (...) {
      s->failure = std::current_exception();
    }
  });
}

ProgressToPython::~ProgressToPython() {
  if (state_->callback) set_progress_listener(std::move(state_->previous));
  std::lock_guard<std::mutex> lock(state_->mutex);
  state_->failure = nullptr;  // destroyed with the GIL held (the module's functions hold it)
}

void ProgressToPython::rethrow_if_failed() {
  std::exception_ptr failure;
  {
    std::lock_guard<std::mutex> lock(state_->mutex);
    std::swap(failure, state_->failure);
  }
  if (failure) std::rethrow_exception(failure);
}

}  // namespace fulcrum::python
