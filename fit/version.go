package fit

// EngineVersion identifies the numerical engine in every stored result, so
// that a fit can be traced to the code that made it. Bump it whenever a
// change can alter a number.
const EngineVersion = "0.3.1"
