// Uses the installed library: summary statistics of a few numbers.
#include <sillstone/summary.hpp>
#include <sillstone/version.hpp>

#include <iostream>

int main() {
  const sillstone::UnivariateStats s = sillstone::describe({1, 2, 3, 4, 5});
  std::cout << "sillstone " << sillstone::version() << " mean " << s.mean << "\n";
  return s.mean == 3.0 ? 0 : 1;
}
