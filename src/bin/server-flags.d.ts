export const SERVER_NODE_FLAGS: string[];
