// Factored filters against the Joseph form over 100-step runs: 12 states, 6 measurements (factored_equivalence.hpp).
#include "factored_equivalence.hpp"

TEST_CASE_TEMPLATE("square-root and UD filters match the Joseph-form filter over 100 steps, 12x6", T, float, double) {
  keel_test::equivalence<T, 12, 6>(10);
}
