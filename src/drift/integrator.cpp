#include "cullcast/drift/integrator.hpp"

#include <stdexcept>

namespace cullcast::drift {

Scheme scheme_from_name(std::string_view name) {
  if (name == "rk4") return Scheme::rk4;
  if (name == "rk2") return Scheme::rk2;
  if (name == "euler") return Scheme::euler;
  throw std::invalid_argument("unknown integration scheme '" + std::string(name) +
                              "' (expected rk4, rk2 or euler)");
}

std::string scheme_name(Scheme scheme) {
  switch (scheme) {
    case Scheme::euler: return "euler";
    case Scheme::rk2: return "rk2";
    case Scheme::rk4: return "rk4";
  }
  return "rk4";
}

}  // namespace cullcast::drift
