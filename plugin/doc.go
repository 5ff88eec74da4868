// Package plugin is the gridstage stage protocol: the plain Go interface a
// stage implements, the handshake both sides share, the gRPC adapters
// between that interface and the generated code in stagepb, and the client
// side that launches a stage executable and talks to it.
//
// Stages are separate executables speaking gRPC through
// github.com/hashicorp/go-plugin, so they can be written in any language
// with gRPC support. gridstage serves chains (`gridstage serve`); a
// downstream stage reads them by reference and returns estimates that carry
// the chain hash of every chain they used.
//
// Versions: the protocol is version 1 (the handshake and the stagepb
// package, gridstage.stage.v1); minor versions add fields that older
// stages ignore. Minor 1 (ProtocolMinor) adds ChainData.sensitivities:
// a stage that lists CapSensitivities receives every chain inline with its
// exact derivatives in its process's parameters (AR(1) maxent chains; the
// host rebuilds each chain from its file's spec, checks it bit for bit and
// differentiates it). Stages that do not list the capability see nothing
// new.
//
// A Go stage implements Stage and calls Serve from main. A host calls
// Launch, uses the returned Stage, and closes the Process, which stops the
// stage and everything it started.
package plugin
