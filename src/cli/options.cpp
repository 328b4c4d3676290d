#include "cli/options.hpp"

#include <algorithm>
#include <fmt/format.h>
#include <sstream>

#include "vzero/error.hpp"
#include "vzero/profile.hpp"

namespace vzero::cli {

namespace po = boost::program_options;

po::variables_map parse_command_line(const Args& args, const po::options_description& visible,
                                     const po::options_description& hidden,
                                     const po::positional_options_description& positional) {
  po::options_description all;
  all.add(visible).add(hidden);
  po::variables_map vm;
  try {
    po::store(po::command_line_parser(args).options(all).positional(positional).run(), vm);
    po::notify(vm);
  } catch (const po::too_many_positional_options_error&) {
    throw UsageError("too many file names; see the usage line");
  } catch (const po::error& e) {
    throw UsageError(e.what());
  }
  return vm;
}

std::string help_text(const po::options_description& opts) {
  std::ostringstream ss;
  ss << opts;
  return ss.str();
}

std::string builtin_profile_list() {
  std::string out;
  for (const auto& n : builtin_profile_names()) out += (out.empty() ? "" : ", ") + n;
  return out;
}

std::string format_seconds(double s) { return fmt::format("{:g}", s); }

double median_step(const std::vector<double>& t) {
  std::vector<double> d;
  for (std::size_t i = 1; i < t.size(); ++i) d.push_back(t[i] - t[i - 1]);
  if (d.empty()) return 0;
  std::nth_element(d.begin(), d.begin() + static_cast<std::ptrdiff_t>(d.size() / 2), d.end());
  return d[d.size() / 2];
}

}  // namespace vzero::cli
