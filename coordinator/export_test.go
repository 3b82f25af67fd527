package coordinator

// ReplyChunk is replyChunk, for the external tests of the reply parts.
const ReplyChunk = replyChunk
