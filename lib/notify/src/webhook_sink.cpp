// Webhook: an HTTP POST of the event as JSON through libcurl, with a per-attempt timeout.
#include <curl/curl.h>

#include <mutex>

#include "tonewarden/notify/notifier.h"

namespace tonewarden::notify {
namespace {

using base::ErrorCode;
using base::make_error;

size_t discard(char*, size_t size, size_t n, void*) { return size * n; }

class WebhookSink final : public Sink {
 public:
  explicit WebhookSink(const WebhookConfig& c) : config_(c) {
    static std::once_flag once;
    std::call_once(once, [] { curl_global_init(CURL_GLOBAL_DEFAULT); });
    min_severity = c.min_severity;
  }

  base::Status deliver(const NotifyEvent& e) override {
    CURL* curl = curl_easy_init();
    if (!curl) return make_error(ErrorCode::kInternal, "webhook: cannot create a client");
    const std::string body = to_json(e);
    curl_slist* headers = curl_slist_append(nullptr, "Content-Type: application/json");
    curl_easy_setopt(curl, CURLOPT_URL, config_.url.c_str());
    curl_easy_setopt(curl, CURLOPT_POSTFIELDS, body.c_str());
    curl_easy_setopt(curl, CURLOPT_POSTFIELDSIZE, static_cast<long>(body.size()));
    curl_easy_setopt(curl, CURLOPT_HTTPHEADER, headers);
    curl_easy_setopt(curl, CURLOPT_TIMEOUT_MS, static_cast<long>(config_.timeout.count()));
    curl_easy_setopt(curl, CURLOPT_NOSIGNAL, 1L);
    curl_easy_setopt(curl, CURLOPT_WRITEFUNCTION, discard);
    curl_easy_setopt(curl, CURLOPT_PROTOCOLS_STR, "http,https");
    curl_easy_setopt(curl, CURLOPT_USERAGENT, "tonewarden-notify");
    const CURLcode rc = curl_easy_perform(curl);
    long status = 0;
    curl_easy_getinfo(curl, CURLINFO_RESPONSE_CODE, &status);
    curl_slist_free_all(headers);
    curl_easy_cleanup(curl);
    if (rc != CURLE_OK) {
      return make_error(ErrorCode::kUnavailable, "POST " + config_.url + ": " + curl_easy_strerror(rc));
    }
    if (status < 200 || status >= 300) {
      return make_error(ErrorCode::kUnavailable, "POST " + config_.url + ": HTTP " + std::to_string(status));
    }
    return base::Status::success();
  }

  int max_attempts() const override { return 1 + config_.retries; }
  std::string describe() const override { return "webhook " + config_.url; }

 private:
  WebhookConfig config_;
};

}  // namespace

base::Result<std::unique_ptr<Sink>> make_webhook_sink(const WebhookConfig& c) {
  if (c.url.rfind("http://", 0) != 0 && c.url.rfind("https://", 0) != 0) {
    return make_error(ErrorCode::kInvalidArgument, "webhook url must start with http:// or https://, got '" + c.url + "'");
  }
  if (c.retries < 0 || c.retries > 20) {
    return make_error(ErrorCode::kInvalidArgument, "webhook retries must be in [0, 20]");
  }
  if (c.timeout.count() < 1) return make_error(ErrorCode::kInvalidArgument, "webhook timeout must be >= 1 ms");
  return std::unique_ptr<Sink>(new WebhookSink(c));
}

}  // namespace tonewarden::notify
