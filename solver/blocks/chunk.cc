#include "solver/blocks/chunk.h"

#include <stdexcept>

namespace roundtrip::blocks {
namespace {
thread_local Chunk* t_chunk = nullptr;
}  // namespace

ChunkScope::ChunkScope(Chunk* chunk) { t_chunk = chunk; }
ChunkScope::~ChunkScope() { t_chunk = nullptr; }

Chunk* current_chunk() { return t_chunk; }

void claim_chunk(Chunk& chunk, BlockSum sum) {
  if (chunk.seen) throw std::logic_error("a block chunk met a second reduction in one frequency");
  chunk.seen = true;
  chunk.sum = sum;
}

}  // namespace roundtrip::blocks
