// The checkpoint journal never changes results silently: a record with one changed character
// fails its CRC-32 and is dropped (and reported by line), a record holding a value that is not
// finite is never used even with a matching checksum, every header line is compared with the
// case (not only the hash line), an old journal without checksums is refused, and CRLF line
// endings are accepted. The CRC-32 is zlib's (ISO 3309 polynomial; common practice).
#include "io/journal.h"

#include <gtest/gtest.h>
#include <zlib.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include "common/scratch.h"
#include "io/errors.h"

namespace roundtrip::io {
namespace {

namespace fs = std::filesystem;
using roundtrip::testing::slurp;

const JournalKey kKey = {{"roundtrip_version", "0.1.0"},
                         {"conditions.temperature", "\"300 K\""},
                         {"separations.values[0]", "\"1 um\""}};
constexpr int kHeaderLines = 6;  // magic, hash, 3 key lines, begin

std::vector<std::string> lines_of(const fs::path& p) {
  std::vector<std::string> out;
  std::ifstream in(p, std::ios::binary);
  for (std::string l; std::getline(in, l);) out.push_back(l);
  return out;
}
void write_lines(const fs::path& p, const std::vector<std::string>& lines, const char* eol = "\n") {
  std::ofstream out(p, std::ios::binary | std::ios::trunc);
  for (const auto& l : lines) out << l << eol;
}
// A record line with a correct checksum, as the journal writes it (crc32 of the text before it).
std::string with_crc(const std::string& body) {
  const auto crc =
      ::crc32(0L, reinterpret_cast<const Bytef*>(body.data()), static_cast<uInt>(body.size()));
  char buf[16];
  std::snprintf(buf, sizeof buf, " %08lx", static_cast<unsigned long>(crc));
  return body + buf;
}

class JournalIntegrity : public roundtrip::testing::ScratchDirTest {
 protected:
  fs::path journal_with_three_records() {
    const fs::path p = dir_ / "r.h5.journal";
    Journal j(p, kKey, false);
    j.store(0)->record(0, 1e14, Spectral{-0.5, 1.0, 2.0});
    j.store(0)->record(0, 2e14, Spectral{-0.25, 1.0, 2.0});
    j.store(0)->record(1, 1e14, Spectral{-0.125, 1.0, 2.0});
    return p;
  }
};

TEST_F(JournalIntegrity, OneChangedDigitInARecordIsDroppedAndReportedByLine) {
  const fs::path p = journal_with_three_records();
  auto lines = lines_of(p);
  ASSERT_EQ(lines.size(), kHeaderLines + 3u);
  // Second record: s = -0x1p-2 becomes -0x1p+2 (16x larger), the checksum left as it was.
  std::string& rec = lines[kHeaderLines + 1];
  const auto at = rec.find("-0x1p-2");
  ASSERT_NE(at, std::string::npos) << rec;
  rec[at + 5] = '+';
  write_lines(p, lines);
  Journal j(p, kKey, false);
  EXPECT_EQ(j.loaded(), 2u);
  ASSERT_EQ(j.damaged_lines(), std::vector<int>{kHeaderLines + 2});
  Spectral s;
  EXPECT_FALSE(j.store(0)->lookup(0, 2e14, s)) << "a damaged record was used";
  EXPECT_TRUE(j.store(0)->lookup(0, 1e14, s));
  EXPECT_EQ(s.value, -0.5);
}

TEST_F(JournalIntegrity, ANonFiniteRecordIsNeverUsedEvenWithAMatchingChecksum) {
  const fs::path p = journal_with_three_records();
  auto lines = lines_of(p);
  lines.push_back(with_crc("c 0 0 0x1.5d3ef79800000p+48 nan 0x1p+0 0x1p+1"));
  lines.push_back(with_crc("c 0 0 0x1.5d3ef79800000p+49 -0x1p-1 inf 0x1p+1"));
  write_lines(p, lines);
  Journal j(p, kKey, false);
  EXPECT_EQ(j.loaded(), 3u);
  EXPECT_EQ(j.damaged_lines(), (std::vector<int>{kHeaderLines + 4, kHeaderLines + 5}));
  Spectral s;
  EXPECT_FALSE(j.store(0)->lookup(0, 0x1.5d3ef798p+48, s));
  EXPECT_FALSE(j.store(0)->lookup(0, 0x1.5d3ef798p+49, s));
}

TEST_F(JournalIntegrity, NonFiniteValuesAreNeverWritten) {
  const fs::path p = dir_ / "r.h5.journal";
  {
    Journal j(p, kKey, false);
    j.store(0)->record(0, 1e14, Spectral{std::nan(""), 1.0, 2.0});
    j.store(0)->record(0, 2e14, Spectral{-0.5, 1.0, 2.0});
  }
  EXPECT_EQ(lines_of(p).size(), kHeaderLines + 1u);
}

TEST_F(JournalIntegrity, AKeyLineEditedToAnotherTemperatureIsRefusedThoughTheHashLineMatches) {
  const fs::path p = journal_with_three_records();
  auto lines = lines_of(p);
  bool edited = false;
  for (auto& l : lines)
    if (l == "key conditions.temperature = \"300 K\"") {
      l = "key conditions.temperature = \"290 K\"";
      edited = true;
    }
  ASSERT_TRUE(edited);
  write_lines(p, lines);
  try {
    Journal j(p, kKey, false);
    ADD_FAILURE() << "a journal written for 290 K was resumed for 300 K";
  } catch (const CaseError& e) {
    const std::string m = e.what();
    EXPECT_NE(m.find("conditions.temperature was \"290 K\", now \"300 K\""), std::string::npos)
        << m;
  }
}

TEST_F(JournalIntegrity, AnEditedHashLineIsRefused) {
  const fs::path p = journal_with_three_records();
  auto lines = lines_of(p);
  ASSERT_EQ(lines[1].rfind("hash ", 0), 0u);
  lines[1].back() = lines[1].back() == '0' ? '1' : '0';
  write_lines(p, lines);
  try {
    Journal j(p, kKey, false);
    ADD_FAILURE() << "resumed with a wrong hash line";
  } catch (const CaseError& e) {
    EXPECT_NE(std::string(e.what()).find("hash"), std::string::npos) << e.what();
  }
}

TEST_F(JournalIntegrity, ADamagedHeaderLineIsRefusedNamingItsLine) {
  const fs::path p = journal_with_three_records();
  auto lines = lines_of(p);
  lines[3] = "kex conditions.temperature = \"300 K\"";
  write_lines(p, lines);
  try {
    Journal j(p, kKey, false);
    ADD_FAILURE() << "resumed with a damaged header";
  } catch (const CaseError& e) {
    EXPECT_NE(std::string(e.what()).find(":4: damaged header line"), std::string::npos) << e.what();
  }
  EXPECT_EQ(lines_of(p), lines) << "a refused journal is left as it was";
}

TEST_F(JournalIntegrity, AJournalOfTheFormatWithoutChecksumsIsRefused) {
  const fs::path p = journal_with_three_records();
  auto lines = lines_of(p);
  lines[0] = "roundtrip-journal 1";
  write_lines(p, lines);
  try {
    Journal j(p, kKey, false);
    ADD_FAILURE() << "a journal without checksums was resumed";
  } catch (const CaseError& e) {
    EXPECT_NE(std::string(e.what()).find("without record checksums"), std::string::npos)
        << e.what();
  }
}

TEST_F(JournalIntegrity, CrlfLineEndingsAreAcceptedAndRecordsAppendedAfterThem) {
  const fs::path p = journal_with_three_records();
  write_lines(p, lines_of(p), "\r\n");
  ASSERT_NE(slurp(p).find("\r\n"), std::string::npos);
  {
    Journal j(p, kKey, false);
    EXPECT_EQ(j.loaded(), 3u);
    EXPECT_TRUE(j.damaged_lines().empty());
    EXPECT_TRUE(j.had_crlf());
    j.store(0)->record(2, 1e14, Spectral{-1.0, 1.0, 2.0});
  }
  Journal j(p, kKey, false);
  EXPECT_EQ(j.loaded(), 4u);
  EXPECT_TRUE(j.damaged_lines().empty());
}

}  // namespace
}  // namespace roundtrip::io
