// Field splitting of the readers (src/core/text.hpp): the allocation-free view splitter
// gives the same fields as the string splitter, on RFC 4180 examples (RFC 4180 §2) and on
// generated lines (a property test).
#include <charconv>
#include <cstring>
#include <limits>
#include <random>
#include <string>
#include <vector>

#include "core/text.hpp"
#include "test_support.hpp"

namespace {

void check_same(const std::string& line, char d) {
  std::vector<vzero::detail::Field> a;
  std::vector<vzero::detail::FieldView> b;
  std::string scratch;
  bool ua = false, ub = false;
  vzero::detail::split_fields_into(line, d, a, &ua);
  vzero::detail::split_views_into(line, d, b, scratch, &ub);
  INFO("line: [", line, "]");
  REQUIRE(a.size() == b.size());
  CHECK(ua == ub);
  for (std::size_t i = 0; i < a.size(); ++i) {
    CHECK(a[i].text == std::string(b[i].text));
    CHECK(a[i].column == b[i].column);
  }
}

}  // namespace

TEST_CASE("view splitting equals string splitting") {
  // RFC 4180 §2: fields in quotes may hold delimiters; a quote inside is written "".
  for (const char* line : {"", ",", "a", "a,b,c", "a,,c,", "\"a,b\",c", "\"x\"\"y\",z", "  \"q\" tail,1",
                           "\"unclosed,1,2", "\"\"", "a,\"\"\"\",b", " \"a\"\"b\"c\"d,e", "1.5,OVER,,NA"})
    check_same(line, ',');
  std::mt19937 rng(7);
  const std::string alphabet = "ab1.,; \"\t";
  for (int k = 0; k < 20000; ++k) {
    std::string line;
    const int len = static_cast<int>(rng() % 24);
    for (int i = 0; i < len; ++i) line.push_back(alphabet[rng() % alphabet.size()]);
    check_same(line, k % 3 == 0 ? ';' : k % 3 == 1 ? ',' : '\t');
  }
}

TEST_CASE("numbers read bit for bit as std::from_chars reads them") {
  // The reference is std::from_chars (C++17 [charconv], correctly rounded); parse_number's
  // quick path for plain decimals must give the same double, sign of zero included.
  std::mt19937_64 rng(11);
  auto reference = [](std::string t) {
    double v = 0;
    auto [p, ec] = std::from_chars(t.data(), t.data() + t.size(), v);
    REQUIRE(ec == std::errc());
    REQUIRE(p == t.data() + t.size());
    return v;
  };
  auto same_bits = [](double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; };
  for (const char* t : {"0", "-0", "-0.0", "0.0512", "3.5", "1234567890.12345", "0.1", "0.3", "2.675", "-1.5e-3",
                        "999999999999999", "9007199254740993", "0.00000000000000000000012", "123456789012345678"}) {
    auto v = vzero::detail::parse_number(t);
    REQUIRE(v.has_value());
    INFO(t);
    CHECK(same_bits(*v, reference(t)));
  }
  for (int k = 0; k < 200000; ++k) {
    const int int_digits = 1 + static_cast<int>(rng() % 10), frac_digits = static_cast<int>(rng() % 14);
    std::string t = rng() % 4 == 0 ? "-" : "";
    for (int i = 0; i < int_digits; ++i) t.push_back(static_cast<char>('0' + rng() % 10));
    if (frac_digits > 0) {
      t.push_back('.');
      for (int i = 0; i < frac_digits; ++i) t.push_back(static_cast<char>('0' + rng() % 10));
    }
    INFO(t);
    const double want = reference(t);
    CHECK(same_bits(*vzero::detail::parse_number(t), want));
    std::string comma = t;
    for (auto& c : comma)
      if (c == '.') c = ',';
    CHECK(same_bits(*vzero::detail::parse_number(comma, ','), want));
  }
  CHECK_FALSE(vzero::detail::parse_number("1,5").has_value());
  CHECK_FALSE(vzero::detail::parse_number("1.5", ',').has_value());
  for (const char* t : {"1.", ".5", "-.5", "1e5", "-", "+", "1..2", "0x10", "1 2"}) {
    double v = 0;
    const char* e = t + std::strlen(t);
    auto [p, ec] = std::from_chars(t, e, v);
    INFO(t);
    CHECK(vzero::detail::parse_number(t).has_value() == (ec == std::errc() && p == e));
  }
}

TEST_CASE("a number too small for a double reads as a zero of its sign; one too large is refused") {
  // IEEE 754 round to nearest: a value below half the smallest subnormal (2^-1075, about
  // 2.47e-324) rounds to 0 with its sign (from memory); std::from_chars reads the subnormals
  // and reports the rest as result_out_of_range. DBL_MAX = 1.7976931348623157e308 (C11 §5.2.4.2.2).
  auto same_bits = [](double a, double b) { return std::memcmp(&a, &b, sizeof a) == 0; };
  for (std::string t : {"1e-400", "2e-324", "0.0000000000000000000000000000001e-300", "1e-99999999999999999999",
                        "+1e-400", " 1E-400 "}) {
    INFO(t);
    auto v = vzero::detail::parse_number(t);
    REQUIRE(v.has_value());
    CHECK(same_bits(*v, 0.0));
    CHECK_FALSE(vzero::detail::number_too_large(t));
  }
  CHECK(same_bits(*vzero::detail::parse_number("-1e-400"), -0.0));
  CHECK(same_bits(*vzero::detail::parse_number("-1,5e-400", ','), -0.0));
  CHECK(*vzero::detail::parse_number("4.9406564584124654e-324") == std::numeric_limits<double>::denorm_min());
  CHECK(*vzero::detail::parse_number("1.7976931348623157e308") == std::numeric_limits<double>::max());
  for (std::string t : {"1e400", "-1e400", "1.8e308", "123456789e301", "0.00001e314", "1e99999999999999999999"}) {
    INFO(t);
    CHECK_FALSE(vzero::detail::parse_number(t).has_value());
    CHECK(vzero::detail::number_too_large(t));
  }
  CHECK(vzero::detail::number_too_large("1,5e400", ','));
  CHECK_FALSE(vzero::detail::number_too_large("1.5e400", ','));  // a '.' in a decimal-comma file is no number
  for (std::string t : {"inf", "nan", "abc", "1e", "", "1e400x"}) {
    INFO(t);
    CHECK_FALSE(vzero::detail::number_too_large(t));
  }
  CHECK(vzero::detail::describe_found(" 1e999 ") ==
        "\"1e999\", which is too large for a double (the largest is 1.7976931348623157e308)");
  CHECK(vzero::detail::describe_found("abc") == "\"abc\"");
}
