// Parts of the compiled Python module (python/vzero_py*.cpp).
#pragma once

#include <pybind11/pybind11.h>

namespace vzero::python {

// Adds fit_text (`vzero fit` on a table given as a path or as CSV text).
void add_fit(pybind11::module_& m);

}  // namespace vzero::python
