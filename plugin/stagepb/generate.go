// Package stagepb holds the generated protobuf and gRPC code of the stage
// protocol. Nothing hand-written lives here except this generator
// configuration; edit stage.proto and regenerate with
//
//	go generate ./plugin/stagepb
//
// which needs protoc 3.21 (Debian: protobuf-compiler) and, on the PATH,
//
//	go install google.golang.org/protobuf/cmd/protoc-gen-go@v1.36.12
//	go install google.golang.org/grpc/cmd/protoc-gen-go-grpc@v1.6.2
//
// It also writes the Python message classes for the Python stage under
// stages/python/stagepb (protoc's built-in Python generator).
package stagepb

//go:generate protoc --proto_path=. --go_out=. --go_opt=paths=source_relative --go-grpc_out=. --go-grpc_opt=paths=source_relative --python_out=../../stages/python/stagepb stage.proto
