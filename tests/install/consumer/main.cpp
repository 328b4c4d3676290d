// Runs the whole rates job through the installed library on the given export and plate map,
// and prints how many rows rates.csv would have (header included).
#include <algorithm>
#include <cstdio>
#include <vzero/rates_run.hpp>

int main(int argc, char** argv) {
  if (argc != 4) return 2;
  vzero::ResolvedSettings s =
      vzero::resolve_settings({{"layout", argv[2]}, {"output", argv[3]}, {"signal-only", "true"}});
  s.settings.files = {argv[1]};
  vzero::StringSink sink;
  vzero::RatesOutputs out = vzero::run_rates(s, sink);
  const std::string& rates = sink.text().at("rates");
  std::printf("%ld rows, %zu file(s)\n", static_cast<long>(std::count(rates.begin(), rates.end(), '\n')),
              out.analyses.size());
  return 0;
}
