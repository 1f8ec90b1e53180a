#pragma once
// The open connections, so that shutdown can stop them all and the acceptor can refuse
// clients past the connection limit.

#include <memory>
#include <mutex>
#include <set>

namespace foothold {

class Connection;

class ConnectionRegistry {
 public:
  void Add(const std::shared_ptr<Connection>& connection);
  void Remove(const std::shared_ptr<Connection>& connection);
  void StopAll();
  int Count() const;

 private:
  mutable std::mutex mutex_;
  std::set<std::shared_ptr<Connection>> connections_;
};

}  // namespace foothold
