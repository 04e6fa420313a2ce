// The Python module `fulcrum` (docs/python.md): the library's subcommands
// that make sense in memory, as functions taking maps as FITS paths or as
// (numpy array, header) pairs, with the settings as keyword arguments named
// as in a sample manifest and checked by the library's own setting checks.
//
// Errors: the library's InputError, SettingError and InternalError become
// fulcrum.InputError (also a ValueError), fulcrum.SettingError (an
// InputError) and fulcrum.InternalError (also a RuntimeError), all
// fulcrum.Error, carrying the one-line message the command line prints and
// the attributes `file` and `problem` (SettingError also `setting`, `value`,
// `rule`).
#include <pybind11/pybind11.h>

#include "bindings.hpp"
#include "fulcrum/core/error.hpp"
#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/version.hpp"

namespace py = pybind11;

namespace {

PyObject* g_error = nullptr;
PyObject* g_input_error = nullptr;
PyObject* g_setting_error = nullptr;
PyObject* g_internal_error = nullptr;

PyObject* new_error(py::module_& m, const char* name, const char* doc, PyObject* bases) {
  PyObject* type = PyErr_NewExceptionWithDoc((std::string("fulcrum.") + name).c_str(), doc, bases, nullptr);
  if (!type) throw py::error_already_set();
  m.add_object(name, py::handle(type));
  return type;
}

void raise(PyObject* type, const std::string& message, const fulcrum::InputError* input) {
  py::object error = py::reinterpret_borrow<py::object>(type)(message);
  if (input) {
    error.attr("file") = input->file();
    error.attr("problem") = input->problem();
  }
  if (const auto* s = dynamic_cast<const fulcrum::SettingError*>(input)) {
    error.attr("setting") = s->setting();
    error.attr("value") = s->value();
    error.attr("rule") = s->rule();
  }
  PyErr_SetObject(type, error.ptr());
}

}  // namespace

PYBIND11_MODULE(fulcrum, m) {
  m.doc() =
      "fulcrum: where is the centre of a gas-stripped galaxy, and does it matter?\n\n"
      "Maps are FITS paths or (array, header) pairs; an array has shape (ny, nx) (row y, column x,\n"
      "the FITS layout). Angles in degrees (position angles north through east), offsets and radii\n"
      "in arcsec, covariances in arcsec^2 on (east, north), velocities in km/s. See docs/python.md.";
  m.attr("__version__") = fulcrum::version_string();

  py::tuple error_bases = py::make_tuple(py::handle(PyExc_Exception));
  g_error = new_error(m, "Error", "Any error fulcrum reports (its message is one line).", error_bases.ptr());
  py::tuple input_bases = py::make_tuple(py::handle(g_error), py::handle(PyExc_ValueError));
  g_input_error = new_error(m, "InputError",
                            "Unusable input: a file or array (named in `file`) and the problem (`problem`).",
                            input_bases.ptr());
  py::tuple setting_bases = py::make_tuple(py::handle(g_input_error));
  g_setting_error = new_error(m, "SettingError",
                              "A setting outside its allowed range: `setting`, `value` and `rule`.",
                              setting_bases.ptr());
  py::tuple internal_bases = py::make_tuple(py::handle(g_error), py::handle(PyExc_RuntimeError));
  g_internal_error = new_error(m, "InternalError", "An internal check of fulcrum failed (a bug: please report it).",
                               internal_bases.ptr());
  py::register_exception_translator([](std::exception_ptr p) {
    try {
      if (p) std::rethrow_exception(p);
    } catch (const fulcrum::SettingError& e) {
      raise(g_setting_error, e.what(), &e);
    } catch (const fulcrum::InputError& e) {
      raise(g_input_error, e.what(), &e);
    } catch (const fulcrum::InternalError& e) {
      raise(g_internal_error, e.what(), nullptr);
    }
  });

  fulcrum::python::bind_map_functions(m);
  fulcrum::python::bind_galaxy_functions(m);
}
