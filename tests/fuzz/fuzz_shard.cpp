// Any bytes as a shard file, and what merging it alone makes of it.
#include <cstdint>
#include <string>

#include "tannery/error.hpp"
#include "tannery/report/shards.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  try {
    const tannery::ShardRecord shard =
        tannery::parse_shard_json(std::string(reinterpret_cast<const char*>(data), size), "fuzz");
    (void)tannery::merge_shards({shard}, {"fuzz"});
  } catch (const tannery::Error&) {
  }
  return 0;
}
