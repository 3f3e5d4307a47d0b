// Focus: GET /api/v1/evidence/{rig}/{file}: serves clip bytes unchanged, refuses anything but
// plain names, answers 404 for a clip not (yet) on disk and 503 when no folder is configured.
#include <filesystem>
#include <fstream>

#include "http_fixture.h"
#include "support/temp_dir.h"

namespace tonewarden::http::fixture {
namespace {

class EvidenceRouteTest : public HttpServerTest {
 protected:
  ServerConfig config() override {
    ServerConfig c = HttpServerTest::config();
    c.evidence_dir = (dir.path() / "evidence").string();
    return c;
  }
  void SetUp() override {
    std::filesystem::create_directories(dir.path() / "evidence" / "bay4-pump");
    // Bytes 0..255 repeated: any re-encoding or truncation would show.
    for (int i = 0; i < 300000; ++i) clip.push_back(static_cast<char>(i & 0xff));
    std::ofstream(dir.path() / "evidence/bay4-pump/20261202T031500.250Z-r.flac", std::ios::binary) << clip;
    std::ofstream(dir.path() / "secret.flac") << "outside the evidence folder";
    HttpServerTest::SetUp();
  }
  testing::TempDir dir{"tw_evidence_http"};
  std::string clip;
};

TEST_F(EvidenceRouteTest, ServesTheClipByteForByte) {
  auto r = get("/api/v1/evidence/bay4-pump/20261202T031500.250Z-r.flac");
  ASSERT_TRUE(r);
  ASSERT_EQ(r->status, 200);
  EXPECT_EQ(r->get_header_value("Content-Type"), "audio/flac");
  EXPECT_EQ(r->body.size(), clip.size());
  EXPECT_TRUE(r->body == clip);
}

TEST_F(EvidenceRouteTest, UnknownClipIs404WithAJsonError) {
  auto r = get("/api/v1/evidence/bay4-pump/20261202T040000.000Z-r.flac");
  EXPECT_EQ(error_of(r, 404)["code"], "unknown_evidence");
}

TEST_F(EvidenceRouteTest, RefusesNamesThatCouldLeaveTheFolder) {
  for (const char* path :
       {"/api/v1/evidence/bay4-pump/.hidden.flac", "/api/v1/evidence/bay4-pump/clip.wav",
        "/api/v1/evidence/%2e%2e/secret.flac", "/api/v1/evidence/..%2fsecret.flac/x.flac",
        "/api/v1/evidence/bay4-pump/a%20b.flac", "/api/v1/evidence/bay4%5cpump/x.flac"}) {
    auto r = get(path);
    ASSERT_TRUE(r) << path;
    EXPECT_TRUE(r->status == 400 || r->status == 404) << path << " -> " << r->status;
    EXPECT_EQ(r->body.find("outside the evidence folder"), std::string::npos) << path;
  }
  EXPECT_EQ(error_of(get("/api/v1/evidence/bay4-pump/clip.wav"), 400)["parameter"], "file");
}

TEST_F(EvidenceRouteTest, NoFolderConfiguredIs503) {
  server->stop();
  ServerConfig c = HttpServerTest::config();
  start_server(c);
  EXPECT_EQ(error_of(get("/api/v1/evidence/bay4-pump/20261202T031500.250Z-r.flac"), 503)["code"],
            "unavailable");
}

}  // namespace
}  // namespace tonewarden::http::fixture
