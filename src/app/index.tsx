import { useState } from "react";
import { RouterProvider } from "react-router-dom";
import { AppProvider } from "./provider";
import { createRouter } from "./router";

export function App() {
  const [router] = useState(createRouter);
  return (
    <AppProvider>
      <RouterProvider router={router} />
    </AppProvider>
  );
}
