#pragma once
// Small HDF5 C++ API helpers shared by the results writer and the comparison writer: UTF-8
// string attributes, scalar attributes, and 1-D double datasets with `units` and `description`
// attributes (README "HDF5 results").
#include <H5Cpp.h>

#include <string>
#include <vector>

namespace roundtrip::io::h5 {

inline H5::StrType utf8_string_type() {
  H5::StrType t(H5::PredType::C_S1, H5T_VARIABLE);
  t.setCset(H5T_CSET_UTF8);
  return t;
}

inline void attr(H5::H5Object& obj, const std::string& name, const std::string& value) {
  const H5::StrType t = utf8_string_type();
  obj.createAttribute(name, t, H5::DataSpace(H5S_SCALAR)).write(t, value);
}
inline void attr(H5::H5Object& obj, const std::string& name, double value) {
  obj.createAttribute(name, H5::PredType::NATIVE_DOUBLE, H5::DataSpace(H5S_SCALAR))
      .write(H5::PredType::NATIVE_DOUBLE, &value);
}
inline void attr(H5::H5Object& obj, const std::string& name, int value) {
  obj.createAttribute(name, H5::PredType::NATIVE_INT, H5::DataSpace(H5S_SCALAR))
      .write(H5::PredType::NATIVE_INT, &value);
}

inline void vector_dataset(H5::Group& g, const std::string& name, const std::vector<double>& v,
                           const std::string& units, const std::string& meaning) {
  const hsize_t n = v.size();
  H5::DataSet ds = g.createDataSet(name, H5::PredType::NATIVE_DOUBLE, H5::DataSpace(1, &n));
  if (n > 0) ds.write(v.data(), H5::PredType::NATIVE_DOUBLE);
  attr(ds, "units", units);
  attr(ds, "description", meaning);
}

}  // namespace roundtrip::io::h5
