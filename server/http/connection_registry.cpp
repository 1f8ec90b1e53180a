#include "server/http/connection_registry.h"

#include <vector>

#include "server/http/connection.h"

namespace foothold {

void ConnectionRegistry::Add(const std::shared_ptr<Connection>& connection) {
  std::lock_guard<std::mutex> lock(mutex_);
  connections_.insert(connection);
}

void ConnectionRegistry::Remove(const std::shared_ptr<Connection>& connection) {
  std::lock_guard<std::mutex> lock(mutex_);
  connections_.erase(connection);
}

void ConnectionRegistry::StopAll() {
  std::vector<std::shared_ptr<Connection>> all;
  {
    std::lock_guard<std::mutex> lock(mutex_);
    all.assign(connections_.begin(), connections_.end());
    connections_.clear();
  }
  for (const auto& connection : all) connection->Stop();
}

int ConnectionRegistry::Count() const {
  std::lock_guard<std::mutex> lock(mutex_);
  return static_cast<int>(connections_.size());
}

}  // namespace foothold
